import { TRIAL_WARNING_DAYS } from '$lib/billing/plans';
import { formatDay } from '$lib/time';
import { graceEndsAt, shopWriteState } from './gate';
import { allowanceName, machineLimit, type ShopBilling } from './state';

/** The shop layout's billing notice: a tone (with icon and word, never colour alone) and text. */
export interface BillingBanner {
	tone: 'caution' | 'stop';
	/** The word shown beside the icon. */
	label: string;
	text: string;
}

const DAY_MS = 86_400_000;

/** What the banner may also know: machines in use (for "over the plan") and the shop's zone. */
export interface BannerContext {
	machinesInUse?: number;
	timeZone?: string;
}

/**
 * What the shop's members should know about billing, or null when all is well. `canManage`
 * (owner, admin) changes the advice: they can fix it, others should ask them.
 */
export function billingBanner(
	b: ShopBilling,
	canManage: boolean,
	now: Date = new Date(),
	context: BannerContext = {}
): BillingBanner | null {
	const day = (d: Date) => formatDay(d, context.timeZone ?? 'UTC');
	const who = canManage ? 'Open Billing to' : 'Ask an owner or admin to';
	const state = shopWriteState(b, now);
	if (b.status === 'canceled') {
		return {
			tone: 'stop',
			label: 'Read-only',
			text: `The subscription is cancelled. All data stays readable, but new machines and setups cannot be added. ${who} choose a plan.`
		};
	}
	if (b.status === 'past_due') {
		const ends = graceEndsAt(b);
		return state === 'read-only'
			? {
					tone: 'stop',
					label: 'Read-only',
					text: `Payment is overdue beyond the grace period. All data stays readable, but new machines and setups are paused. ${who} update the payment card.`
				}
			: {
					tone: 'caution',
					label: 'Payment overdue',
					text: `The last payment failed. ${who} update the payment card before ${ends ? day(ends) : 'the grace period ends'}, when new machines and setups will pause.`
				};
	}
	if (b.status === 'trialing') {
		if (state === 'read-only') {
			return {
				tone: 'stop',
				label: 'Trial ended',
				text: `The trial ended on ${day(b.trialEndsAt)}. All data stays readable, but new machines and setups cannot be added. ${who} choose a plan.`
			};
		}
		const daysLeft = Math.ceil((b.trialEndsAt.getTime() - now.getTime()) / DAY_MS);
		if (daysLeft <= TRIAL_WARNING_DAYS) {
			return {
				tone: 'caution',
				label: 'Trial ending',
				text: `The trial ends on ${day(b.trialEndsAt)} (${daysLeft} day${daysLeft === 1 ? '' : 's'} left). ${who} choose a plan to keep adding machines and setups.`
			};
		}
	}
	const limit = machineLimit(b);
	if (limit !== null && context.machinesInUse !== undefined && context.machinesInUse > limit) {
		// A downgrade in the billing portal can leave more machines than the plan allows: nothing
		// is hidden or removed, only adding is refused (gate.ts) until the count fits again.
		return {
			tone: 'caution',
			label: 'Over the plan',
			text: `This shop has ${context.machinesInUse} active machines and the ${allowanceName(b)} allows ${limit}. Every machine and its history stays readable and usable, but no machine can be added. ${who} choose a larger plan, or archive machines no longer in use.`
		};
	}
	if (b.status === 'active' && b.cancelAtPeriodEnd && b.currentPeriodEnd) {
		return {
			tone: 'caution',
			label: 'Ending',
			text: `The subscription is set to end on ${day(b.currentPeriodEnd)}; after that the shop becomes read-only. ${who} keep it.`
		};
	}
	return null;
}
