import { error } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { toolReadingSchema } from '$lib/schemas/readings';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { correctingReading } from '$lib/server/readings/correcting';
import { previewAction, saveAction } from '$lib/server/readings/form';
import { findTool } from '$lib/server/readings/lookups';
import { prefillReading } from '$lib/server/readings/prefill';
import { previewToolReading } from '$lib/server/readings/preview';
import { recordToolReading } from '$lib/server/readings/record';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'setups.write');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const tool = await findTool(trx, machine.id, event.params.tool);
		if (!tool) error(404, 'No such tool on this machine.');
		const overview = await machineOverview(trx, machine);
		const row = overview.toolRows.find((t) => t.id === tool.id)!;
		const corrects = await correctingReading(
			trx,
			machine.id,
			{ toolId: tool.id },
			event.url.searchParams.get('corrects')
		);
		const changed = event.url.searchParams.get('changed') === '1';
		const form = await superValidate(
			{
				...prefillReading(event.url),
				toolChanged: changed,
				correctsReadingId: corrects ? String(corrects.id) : ''
			},
			zod4(toolReadingSchema),
			{ errors: false }
		);
		return {
			machine,
			tool: {
				...tool,
				holder: row.holder,
				value: row.value,
				measuredAt: row.measuredAt,
				status: row.status
			},
			reference: overview.state.reference,
			corrects,
			changed,
			form
		};
	});
};

export const actions: Actions = {
	preview: async (event) => {
		const member = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(toolReadingSchema));
		return previewAction(event, member, form, async (trx, machine) => {
			return (await previewToolReading(trx, machine, event.params.tool, form.data)).preview;
		});
	},
	save: async (event) => {
		const member = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(toolReadingSchema));
		return saveAction(
			event,
			member,
			form,
			(trx, machine, actor) => recordToolReading(trx, machine, event.params.tool, form.data, actor),
			(saved) =>
				`/shops/${member.shop.slug}/machines/${event.params.machine}/history/tool/${saved.preview.register}?saved=${saved.readingId}`
		);
	}
};
