import { z } from 'zod';
import { PLAN_KEYS, PLANS } from '$lib/billing/plans';

export const choosePlanSchema = z.object({
	plan: z.enum(PLAN_KEYS, {
		message: `Choose one of the plans: ${PLANS.map((p) => p.name).join(', ')}.`
	})
});

export const PORTAL_FOCUS = ['overview', 'payment-method'] as const;
export const manageBillingSchema = z.object({
	focus: z.enum(PORTAL_FOCUS, { message: 'Say what to manage: the overview or the payment card.' })
});
