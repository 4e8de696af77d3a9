import { fail, redirect } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signUpConfirmSchema } from '$lib/schemas/auth';
import { clientAddress } from '$lib/server/auth/client-address';
import { hit } from '$lib/server/auth/rate-limit';
import { startSession } from '$lib/server/auth/sign-in';
import { checkSignUpToken, completeSignUp, SIGNUP_PROBLEM } from '$lib/server/auth/signup';
import { hashToken } from '$lib/server/auth/tokens';
import { db } from '$lib/server/db';
import { redis } from '$lib/server/redis';
import type { Actions, PageServerLoad } from './$types';

/**
 * The link from the sign-up e-mail. Opening it creates nothing (mail scanners open links); the
 * person types the password they chose and the POST creates the account, the shop and the
 * membership, signs them in and lands on the shop.
 */
export const load: PageServerLoad = async ({ params, locals }) => {
	if (locals.user) redirect(303, '/shops');
	const check = await checkSignUpToken(db(), params.token);
	return {
		problem: check.ok ? null : SIGNUP_PROBLEM[check.reason],
		pending: check.ok
			? {
					email: check.pending.email,
					shopName: check.pending.shopName,
					slug: check.pending.shopSlug
				}
			: null,
		form: await superValidate(zod4(signUpConfirmSchema))
	};
};

export const actions: Actions = {
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(signUpConfirmSchema));
		if (!form.valid) return fail(400, { form });
		const token = event.params.token;
		// Whoever holds the link may guess at the password only a few times.
		const limit = await hit(redis(), `dk:signup:confirm:${hashToken(token)}`, {
			max: 10,
			windowSeconds: 3600
		});
		if (!limit.allowed)
			return message(form, 'Too many wrong passwords for this link. Start the shop again.', {
				status: 429
			});
		const password = form.data.password;
		form.data.password = '';
		const done = await completeSignUp(db(), token, password, clientAddress(event));
		if (!done.ok) return message(form, SIGNUP_PROBLEM[done.reason], { status: 400 });
		return startSession(event, done.email, password, `/shops/${done.slug}`);
	}
};
