import Stripe from 'stripe';
import { isPlanKey, PLANS, type PlanKey } from '$lib/billing/plans';
import { config } from '../config';

let client: Stripe | undefined;
let clientKey: string | undefined;

/** Thrown when billing is used without STRIPE_SECRET_KEY; the page shows its message. */
export class BillingNotConfigured extends Error {}

/**
 * The Stripe SDK client. Talks to real Stripe in production; when FAKE_STRIPE_PORT (or
 * STRIPE_API_HOST…) is set it talks to that endpoint instead, over the same code path. Server
 * only: the secret key never leaves this module.
 */
export function stripe(): Stripe {
	const { secretKey, api } = config.stripe;
	if (!secretKey) {
		throw new BillingNotConfigured(
			'Billing is not set up on this server (STRIPE_SECRET_KEY is missing).'
		);
	}
	if (!client || clientKey !== secretKey) {
		client = new Stripe(secretKey, {
			maxNetworkRetries: api ? 0 : 2,
			timeout: 20_000,
			...(api ? { host: api.host, port: api.port, protocol: api.protocol } : {})
		});
		clientKey = secretKey;
	}
	return client;
}

/** The Stripe price id of a plan: STRIPE_PRICE_<PLAN> when set, else the local fake's id. */
export function priceIdFor(plan: PlanKey): string {
	return config.stripe.prices[plan] ?? PLANS.find((p) => p.key === plan)!.defaultPriceId;
}

/**
 * Which of our plans a Stripe price is: by configured id first, then by the price's
 * `metadata.plan` or lookup key (`bench_monthly`). Undefined for a price we do not sell.
 */
export function planForPrice(price: {
	id: string;
	lookup_key?: string | null;
	metadata?: Record<string, string> | null;
}): PlanKey | undefined {
	const byId = PLANS.find((p) => priceIdFor(p.key) === price.id);
	if (byId) return byId.key;
	const tagged = price.metadata?.plan;
	if (isPlanKey(tagged)) return tagged;
	const key = price.lookup_key?.replace(/_monthly$/, '');
	return isPlanKey(key) ? key : undefined;
}
