import { fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { resetRequestSchema } from '$lib/schemas/auth';
import { clientAddress } from '$lib/server/auth/client-address';
import { requestPasswordReset } from '$lib/server/auth/password-reset';
import { hit } from '$lib/server/auth/rate-limit';
import { db } from '$lib/server/db';
import { redis } from '$lib/server/redis';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({
	form: await superValidate(zod4(resetRequestSchema))
});

const SAME_ANSWER =
	'If that e-mail has an account, a reset link is on its way. It expires in 60 minutes.';

export const actions: Actions = {
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(resetRequestSchema));
		if (!form.valid) return fail(400, { form });
		// Bounded per address so the form cannot be used to flood someone's inbox.
		const limit = await hit(redis(), `dk:reset:addr:${clientAddress(event)}`, {
			max: 10,
			windowSeconds: 3600
		});
		// Not awaited: the answer comes back at once whether or not the e-mail has an account, and
		// whether or not the e-mail service is up (a real account must not be told apart by a
		// slower answer or a 500). A failed send is logged; the person can simply ask again.
		if (limit.allowed)
			void requestPasswordReset(db(), form.data.email).catch((e: unknown) =>
				console.error('password reset e-mail not sent:', (e as Error).message)
			);
		return message(form, SAME_ANSWER);
	}
};
