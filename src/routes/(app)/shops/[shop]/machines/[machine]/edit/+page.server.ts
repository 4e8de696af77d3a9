import { fail, redirect } from '@sveltejs/kit';
import { PHOTO_MAX_BYTES } from '$lib/server/setups/photos';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { machineFormSchema } from '$lib/schemas/machine';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { setMachinePhoto } from '$lib/server/machines/photo';
import { updateMachine } from '$lib/server/machines/service';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.write');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const [{ n }] = await trx('readings').where({ machine_id: machine.id }).count({ n: '*' });
		const form = await superValidate(
			{
				name: machine.name,
				units: machine.units,
				zTravel: machine.zTravel,
				resolution: machine.resolution,
				controlStyle: machine.controlStyle,
				extendedWorkOffsets: machine.extendedWorkOffsets,
				extendedAddress: machine.extendedAddress,
				convention: machine.convention,
				notes: machine.notes
			},
			zod4(machineFormSchema)
		);
		return {
			machine: { id: machine.id, name: machine.name, hasPhoto: machine.hasPhoto },
			form,
			unitsLocked: Number(n) > 0,
			photoMaxMb: PHOTO_MAX_BYTES / 1024 / 1024
		};
	});
};

export const actions: Actions = {
	save: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const form = await superValidate(await event.request.formData(), zod4(machineFormSchema));
		if (!form.valid) return fail(400, { form });
		return withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			const result = await updateMachine(trx, machine.id, form.data, user, clientAddress(event));
			if (!result.ok) return setError(form, (result.field ?? 'name') as 'name', result.message);
			redirect(303, `/shops/${shop.slug}/machines/${machine.id}`);
		});
	},
	photo: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const file = (await event.request.formData()).get('photo');
		return withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			const r = await setMachinePhoto(trx, shop.schemaName, machine.id, file, user);
			if (!r.ok) return fail(400, { photoError: r.message });
			redirect(303, `/shops/${shop.slug}/machines/${machine.id}?photo=1`);
		});
	}
};
