import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { SLUG_RULE, signUpSchema, slugify } from '$lib/schemas/auth';
import { clientAddress } from '$lib/server/auth/client-address';
import { startSession } from '$lib/server/auth/sign-in';
import { db } from '$lib/server/db';
import { createShopWithOwner } from '$lib/server/shops/create';
import { slugTaken } from '$lib/server/shops/queries';
import { findUserByEmail } from '$lib/server/users';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.user) redirect(303, '/shops/new');
	return { form: await superValidate(zod4(signUpSchema)) };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(signUpSchema));
		if (!form.valid) return fail(400, { form });
		const slug = form.data.shopSlug || slugify(form.data.shopName);
		if (!/^[a-z0-9]([a-z0-9-]{0,46}[a-z0-9])$/.test(slug)) {
			return setError(form, 'shopSlug', `Choose a web address for the shop: ${SLUG_RULE}.`);
		}
		if (await slugTaken(db(), slug)) {
			return setError(form, 'shopSlug', `The web address "${slug}" is taken; choose another.`);
		}
		if (await findUserByEmail(db(), form.data.email)) {
			return setError(
				form,
				'email',
				'This e-mail already has an account. Sign in, then start the new shop from your shop list.'
			);
		}
		try {
			await createShopWithOwner(
				db(),
				{ name: form.data.shopName, slug },
				{ name: form.data.name, email: form.data.email, password: form.data.password },
				clientAddress(event)
			);
		} catch (e) {
			// Two sign-ups racing for one address: the unique index decides, nothing was kept.
			if ((e as { code?: string }).code === '23505') {
				return setError(
					form,
					'shopSlug',
					`The web address "${slug}" was just taken; choose another.`
				);
			}
			throw e;
		}
		return startSession(event, form.data.email, form.data.password, `/shops/${slug}`);
	}
};
