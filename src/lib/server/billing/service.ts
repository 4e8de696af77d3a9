/**
 * What the billing page does: read the shop's billing state, start a checkout, change the plan
 * of a running subscription, open the billing portal. State changes themselves arrive only
 * through verified webhooks (./webhook.ts); these functions ask Stripe and record who asked.
 */
import type { Knex } from 'knex';
import type Stripe from 'stripe';
import { planByKey, type PlanKey } from '$lib/billing/plans';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { isoOrNull as iso } from '../db/convert';
import { withShop, type ShopRef } from '../db/tenant';
import { countActiveMachines, graceEndsAt, shopWriteState, type WriteState } from './gate';
import { getShopBilling, machineLimit, type ShopBilling } from './state';
import { priceIdFor, stripe } from './stripe';

export interface InvoiceView {
	id: string;
	number: string;
	status: string;
	currency: string;
	amountDue: number;
	amountPaid: number;
	issuedAt: string;
	periodStart: string | null;
	periodEnd: string | null;
	url: string | null;
}

export interface BillingOverview {
	plan: PlanKey | null;
	status: ShopBilling['status'];
	writeState: WriteState;
	trialEndsAt: string;
	currentPeriodEnd: string | null;
	cancelAtPeriodEnd: boolean;
	pastDueSince: string | null;
	graceEndsAt: string | null;
	hasCustomer: boolean;
	hasSubscription: boolean;
	machinesUsed: number;
	machineLimit: number | null;
	invoices: InvoiceView[];
	/** Choosing a plan now keeps the trial until this date (nothing charged before). */
	keepsTrialUntil: string | null;
	/** What the next charge will be and when; null when nothing is due (trial, ending, none). */
	nextCharge: { cents: number; currency: string; on: string; afterTrial: boolean } | null;
}

/**
 * Stripe's Checkout wants a `trial_end` at least 48 hours ahead; an hour more allows for the
 * time between this page and the payment. A trial closer to its end is charged at once.
 */
const TRIAL_KEEP_MIN_MS = 49 * 3600_000;

/** The trial end to keep when a trialing shop pays early, or null (see TRIAL_KEEP_MIN_MS). */
export function trialToKeep(b: ShopBilling, now: Date = new Date()): Date | null {
	const running = b.stripeSubscriptionId && b.status !== 'canceled';
	if (running || b.status !== 'trialing') return null;
	return b.trialEndsAt.getTime() - now.getTime() >= TRIAL_KEEP_MIN_MS ? b.trialEndsAt : null;
}

/** Everything the billing page shows. No Stripe ids or secrets leave the server. */
export async function billingOverview(knex: Knex, shop: ShopRef): Promise<BillingOverview> {
	const [b, used, invoices] = await Promise.all([
		getShopBilling(knex, shop.id),
		countActiveMachines(shop, knex),
		knex('public.billing_invoices')
			.where({ shop_id: shop.id })
			.orderBy('issued_at', 'desc')
			.limit(24)
			.select()
	]);
	const now = new Date();
	const keep = trialToKeep(b, now);
	const charging =
		b.status === 'active' && b.plan && b.currentPeriodEnd && !b.cancelAtPeriodEnd
			? { cents: planByKey(b.plan).monthlyCents, currency: 'usd', on: b.currentPeriodEnd }
			: null;
	return {
		keepsTrialUntil: iso(keep),
		nextCharge: charging
			? {
					...charging,
					on: charging.on.toISOString(),
					// The subscription's first period is the rest of the trial kept at checkout.
					afterTrial:
						b.trialEndsAt > now &&
						Math.abs(charging.on.getTime() - b.trialEndsAt.getTime()) < 86_400_000
				}
			: null,
		plan: b.plan,
		status: b.status,
		writeState: shopWriteState(b),
		trialEndsAt: b.trialEndsAt.toISOString(),
		currentPeriodEnd: iso(b.currentPeriodEnd),
		cancelAtPeriodEnd: b.cancelAtPeriodEnd,
		pastDueSince: iso(b.pastDueSince),
		graceEndsAt: iso(graceEndsAt(b)),
		hasCustomer: !!b.stripeCustomerId,
		hasSubscription: !!b.stripeSubscriptionId && b.status !== 'canceled',
		machinesUsed: used,
		machineLimit: machineLimit(b),
		invoices: invoices.map((r) => ({
			id: r.stripe_invoice_id,
			number: r.number,
			status: r.status,
			currency: r.currency,
			amountDue: r.amount_due,
			amountPaid: r.amount_paid,
			issuedAt: new Date(r.issued_at).toISOString(),
			periodStart: r.period_start ? new Date(r.period_start).toISOString() : null,
			periodEnd: r.period_end ? new Date(r.period_end).toISOString() : null,
			url: r.hosted_url
		}))
	};
}

async function record(
	knex: Knex,
	shop: ShopRef,
	by: Actor,
	action: string,
	detail: Record<string, unknown>,
	ip: string
): Promise<void> {
	await withShop(
		shop,
		(trx) => audit(trx, { actorUserId: by.id, actorEmail: by.email, action, detail, ip }),
		knex
	);
}

/** The shop's Stripe customer, created on first use and remembered. */
async function ensureCustomer(
	knex: Knex,
	shop: ShopRef & { name: string; slug: string },
	by: Actor
): Promise<string> {
	const b = await getShopBilling(knex, shop.id);
	if (b.stripeCustomerId) return b.stripeCustomerId;
	const customer = await stripe().customers.create({
		name: shop.name,
		email: by.email,
		metadata: { shop_id: String(shop.id), shop: shop.slug }
	});
	// Two clicks at once: the first stored id wins and both use it.
	await knex('public.shops')
		.where({ id: shop.id })
		.whereNull('stripe_customer_id')
		.update({ stripe_customer_id: customer.id });
	return (await getShopBilling(knex, shop.id)).stripeCustomerId!;
}

export type ChooseResult =
	| { kind: 'checkout'; url: string }
	| { kind: 'changed'; plan: PlanKey }
	| { kind: 'refused'; message: string };

/**
 * "Choose plan": a shop without a running subscription goes to a Stripe Checkout session; one
 * with a subscription has its plan switched in place (the webhook then records the change).
 */
export async function choosePlan(
	knex: Knex,
	shop: ShopRef & { name: string; slug: string },
	plan: PlanKey,
	by: Actor,
	origin: string,
	ip = ''
): Promise<ChooseResult> {
	const b = await getShopBilling(knex, shop.id);
	const running = b.stripeSubscriptionId && b.status !== 'canceled';
	if (running && b.plan === plan) {
		return {
			kind: 'refused',
			message: `This shop is already on the ${planByKey(plan).name} plan.`
		};
	}
	if (running && plan !== b.plan) {
		const limit = planByKey(plan).machineLimit;
		const used = await countActiveMachines(shop, knex);
		if (limit !== null && used > limit) {
			return {
				kind: 'refused',
				message: `The ${planByKey(plan).name} plan allows ${limit} machines and this shop has ${used} active. Archive machines first, or choose a larger plan.`
			};
		}
		const sub: Stripe.Subscription = await stripe().subscriptions.retrieve(b.stripeSubscriptionId!);
		const item = sub.items.data[0];
		await stripe().subscriptions.update(sub.id, {
			items: [{ id: item.id, price: priceIdFor(plan) }],
			proration_behavior: 'create_prorations',
			metadata: { shop_id: String(shop.id), plan }
		});
		await record(knex, shop, by, 'billing.plan-change-requested', { from: b.plan, to: plan }, ip);
		return { kind: 'changed', plan };
	}
	const keep = trialToKeep(b);
	const customer = await ensureCustomer(knex, shop, by);
	const back = `${origin}/shops/${shop.slug}/billing`;
	const session = await stripe().checkout.sessions.create({
		mode: 'subscription',
		customer,
		line_items: [{ price: priceIdFor(plan), quantity: 1 }],
		client_reference_id: String(shop.id),
		metadata: { shop_id: String(shop.id), plan },
		subscription_data: {
			metadata: { shop_id: String(shop.id), plan },
			// Paying during the trial keeps the trial: the first charge is on its last day.
			...(keep ? { trial_end: Math.floor(keep.getTime() / 1000) } : {})
		},
		success_url: `${back}?checkout=done`,
		cancel_url: `${back}?checkout=cancelled`
	});
	if (!session.url) throw new Error('Stripe returned a checkout session without a URL');
	await record(
		knex,
		shop,
		by,
		'billing.checkout-started',
		keep ? { plan, trialKeptUntil: keep.toISOString().slice(0, 10) } : { plan },
		ip
	);
	return { kind: 'checkout', url: session.url };
}

export type PortalFocus = 'overview' | 'payment-method';

/** "Manage billing": a billing-portal session for the shop's customer. */
export async function openPortal(
	knex: Knex,
	shop: ShopRef & { slug: string },
	focus: PortalFocus,
	by: Actor,
	origin: string,
	ip = ''
): Promise<{ ok: true; url: string } | { ok: false; message: string }> {
	const b = await getShopBilling(knex, shop.id);
	if (!b.stripeCustomerId) {
		return {
			ok: false,
			message: 'There is no billing account yet: choose a plan first, then manage it here.'
		};
	}
	const session = await stripe().billingPortal.sessions.create({
		customer: b.stripeCustomerId,
		return_url: `${origin}/shops/${shop.slug}/billing`,
		...(focus === 'payment-method' ? { flow_data: { type: 'payment_method_update' as const } } : {})
	});
	await record(knex, shop, by, 'billing.portal-opened', { focus }, ip);
	return { ok: true, url: session.url };
}
