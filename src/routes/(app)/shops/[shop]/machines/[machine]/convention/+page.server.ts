import { fail, redirect } from '@sveltejs/kit';
import { superValidate, setError } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { isOffsetInputError, type ConversionGeometry } from '$lib/offsets';
import { conversionFormSchema } from '$lib/schemas/conversion';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { ConversionRefused, convertMachine, planConversion } from '$lib/server/machines/convert';
import { machineFromParam } from '$lib/server/machines/load';
import { listReferences } from '$lib/server/offsets/machine-state';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.write');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const [reference] = await listReferences(trx, machine.id);
		const target = machine.convention === 'reference-touch' ? 'gauge-length' : 'reference-touch';
		const form = await superValidate(
			{ target, referenceGaugeLineZ: reference?.gaugeLineZ ?? undefined },
			zod4(conversionFormSchema),
			{ errors: false }
		);
		return { machine, form, knownGaugeLineZ: reference?.gaugeLineZ ?? null };
	});
};

const FIELD: Record<string, 'referenceGaugeLineZ' | 'masterTouchZ' | 'masterTool' | 'target'> = {
	referenceGaugeLineZ: 'referenceGaugeLineZ',
	masterTouchZ: 'masterTouchZ',
	masterTool: 'masterTool'
};

async function run(event: RequestEvent, save: boolean) {
	const { shop, user } = await requireMember(event, 'machines.write');
	const form = await superValidate(await event.request.formData(), zod4(conversionFormSchema));
	if (!form.valid) return fail(400, { form });
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		if (form.data.target === machine.convention) {
			return setError(form, 'target', 'The machine already records offsets this way.');
		}
		const geometry: ConversionGeometry = {};
		if (form.data.referenceGaugeLineZ !== undefined)
			geometry.referenceGaugeLineZ = form.data.referenceGaugeLineZ;
		if (form.data.masterTouchZ !== undefined) geometry.masterTouchZ = form.data.masterTouchZ;
		if (form.data.masterTool !== undefined) geometry.masterTool = String(form.data.masterTool);
		try {
			const plan = save
				? await convertMachine(trx, machine, form.data.target, geometry, user, clientAddress(event))
				: await planConversion(trx, machine, form.data.target, geometry);
			if (save) redirect(303, `/shops/${shop.slug}/machines/${machine.id}?converted=1`);
			return { form, plan };
		} catch (e) {
			if (e instanceof ConversionRefused) {
				return setError(form, 'referenceGaugeLineZ', `Gauge-line Z ${e.message}.`);
			}
			if (!isOffsetInputError(e)) throw e;
			const issue = e.issues[0];
			const key = Object.keys(FIELD).find((k) => issue.field.includes(k));
			return setError(
				form,
				key ? FIELD[key] : 'target',
				`${issue.field.split('.').at(-1)} ${issue.message}`
			);
		}
	});
}

export const actions: Actions = {
	preview: (event) => run(event, false),
	convert: (event) => run(event, true)
};
