import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { SLUG_RULE, signUpSchema, slugify } from '$lib/schemas/auth';
import { clientAddress } from '$lib/server/auth/client-address';
import { config } from '$lib/server/config';
import { hit } from '$lib/server/auth/rate-limit';
import { requestSignUp } from '$lib/server/auth/signup';
import { db } from '$lib/server/db';
import { redis } from '$lib/server/redis';
import { slugTaken } from '$lib/server/shops/queries';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user) redirect(303, '/shops/new');
	// Local demo only (the app sends through the loopback fake SES, never real SES): where the
	// link can be read, since a newcomer has no account for the mailbox page yet.
	const { endpoint, local } = config.ses;
	return {
		form: await superValidate(zod4(signUpSchema)),
		localMail: local && endpoint ? endpoint : null
	};
};

/** What the page says after a sign-up, or why it could not start one. */
export type SignUpMessage =
	{ sent: true; email: string; shopName: string } | { sent: false; text: string };

/**
 * Sign-up limits (our own choice, like the reset form's): per client address, and per e-mail so
 * the form cannot flood someone's inbox. Neither depends on whether the e-mail has an account.
 */
const LIMITS = {
	address: { max: 30, windowSeconds: 3600 },
	email: { max: 5, windowSeconds: 3600 }
};

export const actions: Actions = {
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(signUpSchema));
		if (!form.valid) return fail(400, { form });
		const slug = form.data.shopSlug || slugify(form.data.shopName);
		if (!/^[a-z0-9]([a-z0-9-]{0,46}[a-z0-9])$/.test(slug)) {
			return setError(form, 'shopSlug', `Choose a web address for the shop: ${SLUG_RULE}.`);
		}
		// Shop addresses are public (they are in every link), so saying one is taken tells nothing.
		if (await slugTaken(db(), slug)) {
			return setError(form, 'shopSlug', `The web address "${slug}" is taken; choose another.`);
		}
		const email = form.data.email.trim();
		for (const [key, limit] of [
			[`dk:signup:addr:${clientAddress(event)}`, LIMITS.address],
			[`dk:signup:email:${email.toLowerCase()}`, LIMITS.email]
		] as const) {
			const r = await hit(redis(), key, limit);
			if (!r.allowed) {
				const at = new Date(Date.now() + r.retryAfterSeconds * 1000).toISOString().slice(11, 16);
				return message(
					form,
					{
						sent: false,
						text: `Too many sign-ups from here or for this e-mail. Try again at ${at} UTC.`
					} satisfies SignUpMessage,
					{ status: 429 }
				);
			}
		}
		const request = { ...form.data, email, shopSlug: slug };
		// The password is never sent back to the page.
		form.data.password = '';
		try {
			await requestSignUp(db(), request, clientAddress(event));
		} catch (e) {
			console.error('sign-up e-mail not sent:', (e as Error).message);
			return message(
				form,
				{
					sent: false,
					text: 'The e-mail could not be sent just now, so nothing was started. Try again in a few minutes.'
				} satisfies SignUpMessage,
				{ status: 503 }
			);
		}
		return message(form, {
			sent: true,
			email,
			shopName: form.data.shopName
		} satisfies SignUpMessage);
	}
};
