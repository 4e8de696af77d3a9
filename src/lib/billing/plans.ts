/**
 * Datumkeep's plans (issue 8): names and prices of our own, limited by the number of active
 * machines, billed monthly. Shared by the server (gate, checkout, webhooks) and the UI; holds no
 * secrets. The Stripe price behind each plan is configuration (`STRIPE_PRICE_<PLAN>`), with the
 * local fake's catalogue ids as defaults (fakes/stripe/catalogue.ts; a unit test keeps the two
 * in step).
 */
export const PLAN_KEYS = ['bench', 'shop', 'floor'] as const;
export type PlanKey = (typeof PLAN_KEYS)[number];

export interface Plan {
	key: PlanKey;
	name: string;
	/** Active (not archived) machines allowed; null means no limit. */
	machineLimit: number | null;
	/** Monthly price in US cents. */
	monthlyCents: number;
	/** One line for the plan card. */
	blurb: string;
	/** The local fake's price id; production sets STRIPE_PRICE_<KEY> instead. */
	defaultPriceId: string;
}

export const PLANS: readonly Plan[] = [
	{
		key: 'bench',
		name: 'Bench',
		machineLimit: 2,
		monthlyCents: 4900,
		blurb: 'For a small cell: up to 2 machines.',
		defaultPriceId: 'price_bench_monthly'
	},
	{
		key: 'shop',
		name: 'Shop',
		machineLimit: 10,
		monthlyCents: 14900,
		blurb: 'For a job shop floor: up to 10 machines.',
		defaultPriceId: 'price_shop_monthly'
	},
	{
		key: 'floor',
		name: 'Floor',
		machineLimit: null,
		monthlyCents: 34900,
		blurb: 'Every machine you run, no limit.',
		defaultPriceId: 'price_floor_monthly'
	}
];

/** Length of the free trial every shop starts with at sign-up. */
export const TRIAL_DAYS = 14;
/** Machines a shop may have while on trial (the Shop plan's allowance). */
export const TRIAL_MACHINE_LIMIT = 10;
/** Days a past-due shop keeps full use before new machines and setups are refused. */
export const PAST_DUE_GRACE_DAYS = 7;
/** The trial-ending banner shows from this many days before the end. */
export const TRIAL_WARNING_DAYS = 3;

export function isPlanKey(value: unknown): value is PlanKey {
	return typeof value === 'string' && (PLAN_KEYS as readonly string[]).includes(value);
}

export function planByKey(key: PlanKey): Plan {
	return PLANS.find((p) => p.key === key)!;
}

export function formatMoney(cents: number, currency = 'usd'): string {
	return new Intl.NumberFormat('en-US', {
		style: 'currency',
		currency: currency.toUpperCase()
	}).format(cents / 100);
}

export function limitLabel(limit: number | null): string {
	return limit === null ? 'no limit' : `${limit} machine${limit === 1 ? '' : 's'}`;
}
