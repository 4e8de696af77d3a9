import { fail, redirect } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { resetPasswordSchema } from '$lib/schemas/auth';
import {
	checkResetToken,
	completePasswordReset,
	TOKEN_PROBLEM
} from '$lib/server/auth/password-reset';
import { db } from '$lib/server/db';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params }) => {
	const check = await checkResetToken(db(), params.token);
	return {
		problem: check.ok ? null : TOKEN_PROBLEM[check.reason],
		form: await superValidate(zod4(resetPasswordSchema))
	};
};

export const actions: Actions = {
	default: async ({ request, params }) => {
		const form = await superValidate(await request.formData(), zod4(resetPasswordSchema));
		if (!form.valid) return fail(400, { form });
		const result = await completePasswordReset(db(), params.token, form.data.password);
		if (!result.ok) return message(form, TOKEN_PROBLEM[result.reason], { status: 400 });
		redirect(303, '/signin?reset=1');
	}
};
