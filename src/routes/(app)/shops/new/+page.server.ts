import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { SLUG_RULE, slugify } from '$lib/schemas/auth';
import { newShopSchema } from '$lib/schemas/shop';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireUser } from '$lib/server/guard';
import { createShopWithOwner } from '$lib/server/shops/create';
import { slugTaken } from '$lib/server/shops/queries';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireUser(event);
	return { form: await superValidate(zod4(newShopSchema)) };
};

export const actions: Actions = {
	default: async (event) => {
		const user = requireUser(event);
		const form = await superValidate(await event.request.formData(), zod4(newShopSchema));
		if (!form.valid) return fail(400, { form });
		const slug = form.data.shopSlug || slugify(form.data.shopName);
		if (!/^[a-z0-9]([a-z0-9-]{0,46}[a-z0-9])$/.test(slug)) {
			return setError(form, 'shopSlug', `Choose a web address for the shop: ${SLUG_RULE}.`);
		}
		if (await slugTaken(db(), slug))
			return setError(form, 'shopSlug', `The web address "${slug}" is taken; choose another.`);
		try {
			await createShopWithOwner(
				db(),
				{ name: form.data.shopName, slug },
				{ userId: user.id, email: user.email },
				clientAddress(event)
			);
		} catch (e) {
			if ((e as { code?: string }).code === '23505')
				return setError(
					form,
					'shopSlug',
					`The web address "${slug}" was just taken; choose another.`
				);
			throw e;
		}
		redirect(303, `/shops/${slug}`);
	}
};
