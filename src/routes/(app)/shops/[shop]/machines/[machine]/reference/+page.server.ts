import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { formatLength } from '$lib/offsets';
import { referenceReadingSchema } from '$lib/schemas/readings';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { listReferences } from '$lib/server/offsets/machine-state';
import { machineOverview } from '$lib/server/offsets/overview';
import { previewAction, saveAction } from '$lib/server/readings/form';
import { previewReference, recordReference } from '$lib/server/readings/reference';
import type { Actions, PageServerLoad } from './$types';

/** Re-establish the reference (lead and up): a new version; older offsets become stale. */
export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.write');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const references = await listReferences(trx, machine.id);
		const overview = await machineOverview(trx, machine);
		const ref = references[0];
		const form = await superValidate(
			ref
				? {
						instrument: ref.instrument as never,
						height: formatLength(ref.height, machine.units, machine.resolution),
						location: ref.location,
						gaugeLineZ:
							ref.gaugeLineZ === null
								? ''
								: formatLength(ref.gaugeLineZ, machine.units, machine.resolution)
					}
				: {},
			zod4(referenceReadingSchema),
			{ errors: false }
		);
		return {
			machine,
			references,
			tools: overview.toolRows.map((t) => ({
				id: t.id,
				t: t.t,
				h: t.h,
				description: t.description
			})),
			form
		};
	});
};

export const actions: Actions = {
	preview: async (event) => {
		const member = await requireMember(event, 'machines.write');
		const form = await superValidate(event.request, zod4(referenceReadingSchema));
		return previewAction(event, member, form, async (trx, machine) => {
			return (await previewReference(trx, machine, form.data)).preview;
		});
	},
	save: async (event) => {
		const member = await requireMember(event, 'machines.write');
		const form = await superValidate(event.request, zod4(referenceReadingSchema));
		return saveAction(
			event,
			member,
			form,
			(trx, machine, actor) => recordReference(trx, machine, form.data, actor),
			() => `/shops/${member.shop.slug}/machines/${event.params.machine}?reference=new`
		);
	}
};
