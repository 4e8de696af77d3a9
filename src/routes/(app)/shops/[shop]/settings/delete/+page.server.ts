import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { deleteShopSchema } from '$lib/schemas/shop-deletion';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import {
	deletionGraceMs,
	deletionState,
	requestDeletion,
	restoreShop
} from '$lib/server/shops/deletion';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'shop.delete');
	return {
		deletion: await deletionState(db(), shop.id),
		graceDays: Math.round((deletionGraceMs() / 86_400_000) * 10) / 10,
		form: await superValidate(zod4(deleteShopSchema), { errors: false })
	};
};

export const actions: Actions = {
	delete: async (event) => {
		const { shop, user } = await requireMember(event, 'shop.delete');
		const form = await superValidate(event.request, zod4(deleteShopSchema));
		if (!form.valid) return fail(400, { form });
		if (form.data.confirmSlug !== shop.slug) {
			return setError(
				form,
				'confirmSlug',
				`That is not this shop's address: type ${shop.slug} exactly. Nothing was deleted.`
			);
		}
		const r = await requestDeletion(db(), shop, user, clientAddress(event));
		if (!r.ok) return setError(form, 'confirmSlug', r.message);
		redirect(303, `/shops/${shop.slug}/settings/delete`);
	},
	restore: async (event) => {
		const { shop, user } = await requireMember(event, 'shop.delete');
		const r = await restoreShop(db(), shop, user, clientAddress(event));
		if (!r.ok) return fail(400, { restoreError: r.message });
		redirect(303, `/shops/${shop.slug}/settings/delete?restored=1`);
	}
};
