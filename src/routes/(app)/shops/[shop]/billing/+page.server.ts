import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import Stripe from 'stripe';
import { choosePlanSchema, manageBillingSchema } from '$lib/schemas/billing';
import { clientAddress } from '$lib/server/auth/client-address';
import { billingOverview, choosePlan, openPortal } from '$lib/server/billing/service';
import { BillingNotConfigured } from '$lib/server/billing/stripe';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'billing');
	const checkout = event.url.searchParams.get('checkout');
	return {
		billing: await billingOverview(db(), shop),
		returned: checkout === 'done' || checkout === 'cancelled' ? checkout : null
	};
};

/** A Stripe or configuration failure, told in plain words; nothing was changed. */
function providerFailure(e: unknown) {
	if (e instanceof BillingNotConfigured) return fail(503, { error: e.message });
	if (e instanceof Stripe.errors.StripeError) {
		console.error('billing: Stripe refused a request', e.message);
		return fail(502, {
			error: `The payment provider did not accept the request (${e.message}). Nothing was changed; try again in a minute.`
		});
	}
	throw e;
}

const origin = (event: RequestEvent) => event.url.origin;

/**
 * The posted fields as given. Parsed with zod directly rather than superValidate, which fills a
 * missing enum with its first value: a POST without a plan must be refused, not read as Bench.
 */
const fields = (data: FormData) =>
	Object.fromEntries([...data.entries()].filter(([, v]) => typeof v === 'string'));

export const actions: Actions = {
	choosePlan: async (event) => {
		const { shop, user } = await requireMember(event, 'billing');
		const form = choosePlanSchema.safeParse(fields(await event.request.formData()));
		if (!form.success) return fail(400, { error: form.error.issues[0].message });
		let result;
		try {
			result = await choosePlan(
				db(),
				shop,
				form.data.plan,
				user,
				origin(event),
				clientAddress(event)
			);
		} catch (e) {
			return providerFailure(e);
		}
		if (result.kind === 'refused') return fail(409, { error: result.message });
		if (result.kind === 'changed') return { changed: result.plan };
		redirect(303, result.url);
	},
	manageBilling: async (event) => {
		const { shop, user } = await requireMember(event, 'billing');
		const form = manageBillingSchema.safeParse(fields(await event.request.formData()));
		if (!form.success) return fail(400, { error: form.error.issues[0].message });
		let result;
		try {
			result = await openPortal(
				db(),
				shop,
				form.data.focus,
				user,
				origin(event),
				clientAddress(event)
			);
		} catch (e) {
			return providerFailure(e);
		}
		if (!result.ok) return fail(409, { error: result.message });
		redirect(303, result.url);
	}
};
