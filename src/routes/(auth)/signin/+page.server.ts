import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { signInSchema } from '$lib/schemas/auth';
import { auditSignIn, checkCredentials, safeNext, startSession } from '$lib/server/auth/sign-in';
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
	return { form, reset: url.searchParams.has('reset') };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(signInSchema));
		if (!form.valid) return fail(400, { form });
		const outcome = await checkCredentials(event, form.data.email, form.data.password);
		if (!outcome.ok && outcome.reason === 'rate-limited') {
			const minutes = Math.ceil(outcome.retryAfterSeconds / 60);
			return message(
				form,
				`Too many sign-in attempts. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`,
				{
					status: 429
				}
			);
		}
		if (!outcome.ok) {
			form.data.password = '';
			return setError(form, 'password', 'E-mail or password is not right.', { status: 400 });
		}
		await auditSignIn(event, outcome.userId, form.data.email);
		return startSession(event, form.data.email, form.data.password, form.data.next);
	}
};
