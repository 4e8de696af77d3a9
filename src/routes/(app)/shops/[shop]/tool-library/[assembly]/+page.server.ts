import { error, fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { can } from '$lib/permissions';
import { assignFormSchema, measurementFormSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { getMachine } from '$lib/server/offsets/machine-state';
import { ReadingInputError } from '$lib/server/readings/input';
import { assignAssembly, previewAssignment } from '$lib/server/tool-library/assign';
import { addMeasurement, getAssembly } from '$lib/server/tool-library/library';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

const ID = 'measure';

function assemblyId(event: { params: { assembly: string } }): number {
	const id = Number(event.params.assembly);
	if (!/^\d{1,15}$/.test(event.params.assembly) || id <= 0) error(404, 'No such assembly.');
	return id;
}

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const id = assemblyId(event);
	return withShop(shop, async (trx) => {
		const assembly = await getAssembly(trx, id);
		if (!assembly) error(404, 'No such assembly in this shop’s library.');
		const machines = await trx('machines')
			.whereNull('archived_at')
			.orderBy('name')
			.select('id', 'name', 'units', 'convention');
		return {
			assembly,
			machines: machines.map((m) => ({
				id: Number(m.id),
				name: m.name as string,
				units: m.units as 'inch' | 'mm',
				convention: m.convention as string
			})),
			form: await superValidate({ units: assembly.units }, zod4(measurementFormSchema), {
				id: ID,
				errors: false
			}),
			canEdit: can(role, 'machines.write')
		};
	});
};

/** The assign form as posted (a checkbox is "on"), read by the shared schema. */
async function assignInput(event: RequestEvent) {
	const fd = Object.fromEntries(await event.request.formData());
	const values = {
		machineId: String(fd.machineId ?? ''),
		t: String(fd.t ?? ''),
		h: String(fd.h ?? ''),
		override: fd.override === 'on' || fd.override === 'true',
		overrideReason: String(fd.overrideReason ?? '')
	};
	return { values, parsed: assignFormSchema.safeParse(values) };
}

async function assignStep(event: RequestEvent, save: boolean) {
	const { shop, user } = await requireMember(event, 'machines.write');
	const id = assemblyId(event);
	const { values, parsed } = await assignInput(event);
	if (!parsed.success)
		return fail(400, {
			assignValues: values,
			assignErrors: parsed.error.issues.map((i) => ({
				field: String(i.path[0] ?? ''),
				message: i.message
			}))
		});
	try {
		return await withShop(shop, async (trx) => {
			const machine = await getMachine(trx, parsed.data.machineId);
			if (!machine)
				throw ReadingInputError.of('machineId', 'That machine is not in this shop (or archived).');
			const actor = { id: user.id, email: user.email, ip: clientAddress(event) };
			if (!save) {
				const plan = await previewAssignment(trx, id, machine, parsed.data);
				return {
					assignValues: values,
					assignPreview: {
						preview: plan.preview,
						machine: {
							id: machine.id,
							name: machine.name,
							units: machine.units,
							resolution: machine.resolution
						},
						t: plan.t,
						h: plan.h,
						newTool: plan.tool === null,
						cutter: plan.cutter
					}
				};
			}
			const r = await assignAssembly(trx, id, machine, parsed.data, actor);
			return { saved: { machineId: machine.id, h: r.plan.h, readingId: r.readingId } };
		});
	} catch (e) {
		if (!(e instanceof ReadingInputError)) throw e;
		return fail(400, { assignValues: values, assignErrors: e.issues });
	}
}

export const actions: Actions = {
	measure: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const id = assemblyId(event);
		const form = await superValidate(await event.request.formData(), zod4(measurementFormSchema), {
			id: ID
		});
		if (!form.valid) return fail(400, { form });
		const r = await withShop(shop, (trx) =>
			addMeasurement(
				trx,
				id,
				form.data,
				{ id: user.id, email: user.email, ip: clientAddress(event) },
				shop.timeZone
			)
		);
		if (!r.ok) return setError(form, (r.field ?? 'gaugeLength') as 'gaugeLength', r.message);
		return message(form, 'Re-measure recorded; the earlier measurements stay in the history.');
	},
	preview: (event) => assignStep(event, false),
	assign: async (event) => {
		const r = await assignStep(event, true);
		if (r && 'saved' in r && r.saved) {
			const { shop } = await requireMember(event, 'machines.write');
			redirect(
				303,
				`/shops/${shop.slug}/machines/${r.saved.machineId}/history/tool/${r.saved.h}?saved=${r.saved.readingId}`
			);
		}
		return r;
	}
};
