import { json } from '@sveltejs/kit';
import { handleStripeWebhook } from '$lib/server/billing/webhook';
import { db } from '$lib/server/db';
import type { RequestHandler } from './$types';

/**
 * Stripe's webhook endpoint. Not a member route: Stripe is the caller, and the signature on
 * the raw body (checked before anything else) is its credential. Bad signature → 400 and no
 * change; accepted events → 200; a failure while applying → 500 so Stripe retries.
 */
export const POST: RequestHandler = async ({ request }) => {
	const raw = await request.text();
	try {
		const answer = await handleStripeWebhook(db(), raw, request.headers.get('stripe-signature'));
		return json(answer.body, { status: answer.status });
	} catch (e) {
		console.error('stripe webhook: could not apply event', e);
		return json({ error: 'Could not apply the event; try again.' }, { status: 500 });
	}
};
