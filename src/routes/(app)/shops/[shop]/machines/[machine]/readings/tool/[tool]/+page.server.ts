import { error, redirect } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { previewKey, toolReadingSchema } from '$lib/schemas/readings';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { actorOf, refuse } from '$lib/server/readings/form';
import { prefillReading } from '$lib/server/readings/prefill';
import { findTool, previewToolReading, recordToolReading } from '$lib/server/readings/record';
import type { Actions, PageServerLoad } from './$types';

/** The reading being corrected, when the page was opened from a history row. */
async function correcting(
	trx: import('knex').Knex.Transaction,
	machineId: number,
	toolId: number,
	raw: string | null
) {
	if (!raw || !/^\d{1,18}$/.test(raw)) return null;
	const r = await trx('readings as r')
		.leftJoin('public.users as u', 'u.id', 'r.taken_by')
		.where({ 'r.id': Number(raw), 'r.machine_id': machineId, 'r.tool_id': toolId })
		.whereNot('r.kind', 'part-top')
		.first('r.id', 'r.machine_z', 'r.block_height', 'r.taken_at', 'u.name as by');
	return r
		? {
				id: Number(r.id),
				machineZ: Number(r.machine_z),
				blockHeight: Number(r.block_height),
				at: new Date(r.taken_at).toISOString(),
				by: r.by as string | null
			}
		: null;
}

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'setups.write');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const tool = await findTool(trx, machine.id, event.params.tool);
		if (!tool) error(404, 'No such tool on this machine.');
		const overview = await machineOverview(trx, machine);
		const row = overview.toolRows.find((t) => t.id === tool.id)!;
		const corrects = await correcting(
			trx,
			machine.id,
			tool.id,
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
		const { shop } = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(toolReadingSchema));
		if (!form.valid) return refuse(form, null);
		try {
			const preview = await withShop(shop, async (trx) => {
				const machine = await machineFromParam(trx, event.params.machine);
				return (await previewToolReading(trx, machine, event.params.tool, form.data)).preview;
			});
			return { form, preview, previewKey: previewKey(form.data) };
		} catch (e) {
			return refuse(form, e);
		}
	},
	save: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(toolReadingSchema));
		if (!form.valid) return refuse(form, null);
		let saved;
		try {
			saved = await withShop(shop, async (trx) => {
				const machine = await machineFromParam(trx, event.params.machine);
				return recordToolReading(trx, machine, event.params.tool, form.data, actorOf(event, user));
			});
		} catch (e) {
			return refuse(form, e);
		}
		redirect(
			303,
			`/shops/${shop.slug}/machines/${event.params.machine}/history/tool/${saved.preview.register}?saved=${saved.readingId}`
		);
	}
};
