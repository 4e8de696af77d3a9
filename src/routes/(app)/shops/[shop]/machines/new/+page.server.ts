import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { newMachineSchema } from '$lib/schemas/machine';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import { createMachine } from '$lib/server/machines/service';
import { defaultUnits } from '$lib/server/shops/settings';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.write');
	// The shop's default units (settings page); a 1-2-3 block is 3 in = 76.2 mm (NIST SP 811:
	// 1 in = 25.4 mm exactly), at the control's least increment (common shop practice).
	const metric = (await defaultUnits(db(), shop.id)) === 'mm';
	const form = await superValidate(
		{
			units: metric ? 'mm' : 'inch',
			resolution: metric ? 0.001 : 0.0001,
			controlStyle: 'iso',
			convention: 'reference-touch',
			instrument: '1-2-3 block',
			height: metric ? 76.2 : 3
		},
		zod4(newMachineSchema),
		{ errors: false }
	);
	return { form };
};

export const actions: Actions = {
	default: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const form = await superValidate(await event.request.formData(), zod4(newMachineSchema));
		if (!form.valid) return fail(400, { form });
		const result = await createMachine(db(), shop, form.data, user, clientAddress(event));
		if (!result.ok) {
			if (result.field === 'name') return setError(form, 'name', result.message);
			return message(form, result.message, { status: 402 });
		}
		redirect(303, `/shops/${shop.slug}/machines/${result.id}`);
	}
};
