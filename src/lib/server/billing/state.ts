import type { Knex } from 'knex';
import { isPlanKey, planByKey, TRIAL_MACHINE_LIMIT, type PlanKey } from '$lib/billing/plans';

/** Our own subscription states (Stripe's are mapped onto these by the webhook handler). */
export const SUBSCRIPTION_STATUSES = ['trialing', 'active', 'past_due', 'canceled'] as const;
export type SubscriptionStatus = (typeof SUBSCRIPTION_STATUSES)[number];

/** A shop's billing columns (public.shops), as the gate, the banner and the page read them. */
export interface ShopBilling {
	shopId: number;
	/** The paid plan; null while on the trial without one. */
	plan: PlanKey | null;
	status: SubscriptionStatus;
	trialEndsAt: Date;
	stripeCustomerId: string | null;
	stripeSubscriptionId: string | null;
	currentPeriodEnd: Date | null;
	cancelAtPeriodEnd: boolean;
	pastDueSince: Date | null;
	/** `created` of the newest Stripe event applied. */
	stateAt: Date | null;
}

export const BILLING_COLUMNS = [
	'id',
	'plan',
	'subscription_status',
	'trial_ends_at',
	'stripe_customer_id',
	'stripe_subscription_id',
	'current_period_end',
	'cancel_at_period_end',
	'past_due_since',
	'billing_state_at'
] as const;

const date = (v: unknown) => (v ? new Date(v as string) : null);

export function toShopBilling(r: Record<string, unknown>): ShopBilling {
	return {
		shopId: Number(r.id),
		plan: isPlanKey(r.plan) ? r.plan : null,
		status: r.subscription_status as SubscriptionStatus,
		trialEndsAt: new Date(r.trial_ends_at as string),
		stripeCustomerId: (r.stripe_customer_id as string | null) ?? null,
		stripeSubscriptionId: (r.stripe_subscription_id as string | null) ?? null,
		currentPeriodEnd: date(r.current_period_end),
		cancelAtPeriodEnd: Boolean(r.cancel_at_period_end),
		pastDueSince: date(r.past_due_since),
		stateAt: date(r.billing_state_at)
	};
}

/**
 * Reads a shop's billing state. With `lock` (inside a transaction) the row is locked, so
 * webhook updates and machine additions for one shop happen one after another.
 */
export async function getShopBilling(
	conn: Knex | Knex.Transaction,
	shopId: number,
	lock = false
): Promise<ShopBilling> {
	const q = conn('public.shops').where({ id: shopId }).first(BILLING_COLUMNS);
	const row = await (lock ? q.forUpdate() : q);
	if (!row) throw new Error(`no shop ${shopId}`);
	return toShopBilling(row);
}

/** Active machines allowed right now: the plan's limit, or the trial allowance. Null = none. */
export function machineLimit(b: ShopBilling): number | null {
	return b.plan ? planByKey(b.plan).machineLimit : TRIAL_MACHINE_LIMIT;
}

/** The name the page shows for the allowance in force: a plan's, or the trial's. */
export function allowanceName(b: ShopBilling): string {
	return b.plan ? `${planByKey(b.plan).name} plan` : 'trial';
}
