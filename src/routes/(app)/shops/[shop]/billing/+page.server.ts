import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import Stripe from 'stripe';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
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

export const actions: Actions = {
	choosePlan: async (event) => {
		const { shop, user } = await requireMember(event, 'billing');
		const form = await superValidate(await event.request.formData(), zod4(choosePlanSchema));
		if (!form.valid) return fail(400, { error: form.errors.plan?.[0] ?? 'Choose a plan.' });
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
		const form = await superValidate(await event.request.formData(), zod4(manageBillingSchema));
		if (!form.valid) return fail(400, { error: form.errors.focus?.[0] ?? 'Say what to manage.' });
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
