import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { transferOwnershipSchema } from '$lib/schemas/members';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import { listMembers } from '$lib/server/members/members';
import { transferOwnership } from '$lib/server/members/transfer';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, user } = await requireMember(event, 'ownership.transfer');
	const members = (await listMembers(db(), shop.id)).filter((m) => m.userId !== user.id);
	return {
		members: members.map((m) => ({
			membershipId: m.membershipId,
			name: m.name,
			email: m.email,
			role: m.role
		})),
		form: await superValidate(zod4(transferOwnershipSchema), { errors: false })
	};
};

export const actions: Actions = {
	default: async (event) => {
		const { shop, user } = await requireMember(event, 'ownership.transfer');
		const form = await superValidate(event.request, zod4(transferOwnershipSchema));
		if (!form.valid) return fail(400, { form });
		const r = await transferOwnership(
			db(),
			shop,
			user,
			form.data.membershipId,
			form.data.password,
			clientAddress(event)
		);
		form.data.password = '';
		if (!r.ok) return setError(form, r.field, r.message);
		redirect(303, `/shops/${shop.slug}/members?transferred=${encodeURIComponent(r.to.name)}`);
	}
};
