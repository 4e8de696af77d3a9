import { describe, expect, it } from 'vitest';
import { PAST_DUE_GRACE_DAYS, PLANS, TRIAL_MACHINE_LIMIT } from '$lib/billing/plans';
import { DEFAULT_PRICES } from '../../../../fakes/stripe/catalogue';
import { billingBanner } from './banner';
import { readOnlyMessage, shopWriteState } from './gate';
import { machineLimit, type ShopBilling } from './state';
import { planForPrice, priceIdFor } from './stripe';

const NOW = new Date('2026-12-10T12:00:00Z');
const DAY = 86_400_000;
const base: ShopBilling = {
	shopId: 1,
	plan: null,
	status: 'trialing',
	trialEndsAt: new Date(NOW.getTime() + 10 * DAY),
	stripeCustomerId: null,
	stripeSubscriptionId: null,
	currentPeriodEnd: null,
	cancelAtPeriodEnd: false,
	pastDueSince: null,
	stateAt: null
};
const shop = (over: Partial<ShopBilling>): ShopBilling => ({ ...base, ...over });

describe('shopWriteState', () => {
	it('lets a shop in its trial and an active shop write', () => {
		expect(shopWriteState(base, NOW)).toBe('ok');
		expect(shopWriteState(shop({ status: 'active', plan: 'bench' }), NOW)).toBe('ok');
	});
	it('makes a shop read-only once the trial has ended without a plan', () => {
		expect(shopWriteState(shop({ trialEndsAt: new Date(NOW.getTime() - 1) }), NOW)).toBe(
			'read-only'
		);
	});
	it(`gives a past-due shop ${PAST_DUE_GRACE_DAYS} days of grace, then read-only`, () => {
		const since = (days: number) =>
			shop({
				status: 'past_due',
				plan: 'shop',
				pastDueSince: new Date(NOW.getTime() - days * DAY)
			});
		expect(shopWriteState(since(1), NOW)).toBe('past-due-grace');
		expect(shopWriteState(since(PAST_DUE_GRACE_DAYS - 0.01), NOW)).toBe('past-due-grace');
		expect(shopWriteState(since(PAST_DUE_GRACE_DAYS + 0.01), NOW)).toBe('read-only');
	});
	it('keeps a cancelled shop read-only, and says data is kept and how to get out', () => {
		const b = shop({ status: 'canceled', plan: 'bench' });
		expect(shopWriteState(b, NOW)).toBe('read-only');
		expect(readOnlyMessage(b, 'new machines')).toMatch(/cancelled.*Nothing is lost.*Billing page/);
	});
});

describe('machine limits', () => {
	it('uses the plan limit, the trial allowance, or none', () => {
		expect(machineLimit(shop({ status: 'active', plan: 'bench' }))).toBe(2);
		expect(machineLimit(shop({ status: 'active', plan: 'shop' }))).toBe(10);
		expect(machineLimit(shop({ status: 'active', plan: 'floor' }))).toBeNull();
		expect(machineLimit(base)).toBe(TRIAL_MACHINE_LIMIT);
	});
});

describe('billingBanner', () => {
	it('is quiet in the middle of a trial and while active', () => {
		expect(billingBanner(base, true, NOW)).toBeNull();
		expect(billingBanner(shop({ status: 'active', plan: 'shop' }), true, NOW)).toBeNull();
	});
	it('warns when the trial is about to end, and tells non-managers whom to ask', () => {
		const b = shop({ trialEndsAt: new Date(NOW.getTime() + 2 * DAY) });
		expect(billingBanner(b, true, NOW)).toMatchObject({ tone: 'caution', label: 'Trial ending' });
		expect(billingBanner(b, false, NOW)?.text).toContain('Ask an owner or admin');
	});
	it('names past-due (grace) and cancelled states with a word, not only a colour', () => {
		const grace = shop({ status: 'past_due', plan: 'bench', pastDueSince: NOW });
		expect(billingBanner(grace, true, NOW)).toMatchObject({
			tone: 'caution',
			label: 'Payment overdue'
		});
		expect(billingBanner(shop({ status: 'canceled', plan: 'bench' }), true, NOW)).toMatchObject({
			tone: 'stop',
			label: 'Read-only'
		});
	});
});

describe('plans and the fake catalogue', () => {
	it('match: each plan has a fake price with its name, amount and machine limit', () => {
		for (const plan of PLANS) {
			const price = DEFAULT_PRICES.find((p) => p.id === priceIdFor(plan.key));
			expect(price, plan.key).toBeDefined();
			expect(price!.productName).toBe(plan.name);
			expect(price!.unit_amount).toBe(plan.monthlyCents);
			expect(price!.metadata?.machine_limit).toBe(String(plan.machineLimit ?? 'unlimited'));
			expect(planForPrice({ id: price!.id })).toBe(plan.key);
		}
		expect(planForPrice({ id: 'price_someone_elses' })).toBeUndefined();
	});
});
