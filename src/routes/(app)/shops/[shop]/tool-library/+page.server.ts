import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { can } from '$lib/permissions';
import { assemblyFormSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { addAssembly, listAssemblies } from '$lib/server/tool-library/library';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const assemblies = await withShop(shop, (trx) => listAssemblies(trx));
	return {
		assemblies,
		form: await superValidate(zod4(assemblyFormSchema), { id: 'add-assembly' }),
		canEdit: can(role, 'machines.write')
	};
};

export const actions: Actions = {
	add: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const form = await superValidate(await event.request.formData(), zod4(assemblyFormSchema), {
			id: 'add-assembly'
		});
		if (!form.valid) return fail(400, { form });
		const r = await withShop(shop, (trx) =>
			addAssembly(
				trx,
				form.data,
				{ id: user.id, email: user.email, ip: clientAddress(event) },
				shop.timeZone
			)
		);
		if (!r.ok) return setError(form, (r.field ?? 'name') as 'name', r.message);
		redirect(303, `/shops/${shop.slug}/tool-library/${r.id}?added=1`);
	}
};
