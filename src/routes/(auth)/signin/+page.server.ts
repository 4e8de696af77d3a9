import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signInSchema } from '$lib/schemas/auth';
import { retryMessage, safeNext, trySignIn } from '$lib/server/auth/sign-in';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.user) redirect(303, safeNext(url.searchParams.get('next')));
	const form = await superValidate(
		{ next: url.searchParams.get('next') ?? '' },
		zod4(signInSchema),
		{
			errors: false
		}
	);
	// Auth.js sends a refused direct POST to /auth/callback/credentials here with ?code=….
	const code = url.searchParams.get('code');
	const refused =
		code === 'rate-limited'
			? 'Too many failed sign-ins for this account from here. Wait a few minutes, then try again.'
			: code === 'credentials'
				? 'E-mail or password is not right.'
				: null;
	return { form, reset: url.searchParams.has('reset'), refused };
};

export const actions: Actions = {
	/** The credentials are checked (limit, password, audit) only inside Auth.js's authorize. */
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(signInSchema));
		if (!form.valid) return fail(400, { form });
		const outcome = await trySignIn(event, form.data.email, form.data.password, form.data.next);
		form.data.password = '';
		if (outcome.reason === 'rate-limited')
			return message(form, retryMessage(outcome.retryAt, outcome.retryAfterSeconds), {
				status: 429
			});
		return setError(form, 'password', 'E-mail or password is not right.', { status: 400 });
	}
};
