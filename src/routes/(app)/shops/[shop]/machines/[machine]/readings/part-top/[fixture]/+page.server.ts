import { error, redirect } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { partTopReadingSchema, previewKey } from '$lib/schemas/readings';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { actorOf, refuse } from '$lib/server/readings/form';
import { prefillReading } from '$lib/server/readings/prefill';
import {
	findFixture,
	previewPartTopReading,
	recordPartTopReading
} from '$lib/server/readings/record';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'setups.write');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const fixture = await findFixture(trx, machine.id, event.params.fixture);
		if (!fixture) error(404, 'No such fixture on this machine.');
		const overview = await machineOverview(trx, machine);
		const row = overview.fixtureRows.find((f) => f.id === fixture.id)!;
		const tools = overview.toolRows.map((t) => ({
			id: t.id,
			t: t.t,
			h: t.h,
			description: t.description,
			value: t.value,
			status: t.status
		}));
		const last = await trx('readings')
			.where({ machine_id: machine.id, fixture_id: fixture.id, kind: 'part-top' })
			.orderBy([
				{ column: 'taken_at', order: 'desc' },
				{ column: 'id', order: 'desc' }
			])
			.first('tool_id');
		const raw = event.url.searchParams.get('corrects');
		const old =
			raw && /^\d{1,18}$/.test(raw)
				? await trx('readings as r')
						.leftJoin('public.users as u', 'u.id', 'r.taken_by')
						.where({
							'r.id': Number(raw),
							'r.machine_id': machine.id,
							'r.fixture_id': fixture.id,
							'r.kind': 'part-top'
						})
						.first(
							'r.id',
							'r.machine_z',
							'r.block_height',
							'r.taken_at',
							'r.tool_id',
							'u.name as by'
						)
				: undefined;
		const corrects = old
			? {
					id: Number(old.id),
					machineZ: Number(old.machine_z),
					blockHeight: Number(old.block_height),
					at: new Date(old.taken_at).toISOString(),
					by: (old.by as string | null) ?? null
				}
			: null;
		const defaultTool =
			old?.tool_id ?? last?.tool_id ?? tools.find((t) => t.value !== null)?.id ?? '';
		const form = await superValidate(
			{
				withToolId: String(defaultTool),
				...prefillReading(event.url),
				correctsReadingId: corrects ? String(corrects.id) : ''
			},
			zod4(partTopReadingSchema),
			{ errors: false }
		);
		return {
			machine,
			fixture: { ...row },
			tools,
			reference: overview.state.reference,
			corrects,
			form
		};
	});
};

export const actions: Actions = {
	preview: async (event) => {
		const { shop } = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(partTopReadingSchema));
		if (!form.valid) return refuse(form, null);
		try {
			const preview = await withShop(shop, async (trx) => {
				const machine = await machineFromParam(trx, event.params.machine);
				return (await previewPartTopReading(trx, machine, event.params.fixture, form.data)).preview;
			});
			return { form, preview, previewKey: previewKey(form.data) };
		} catch (e) {
			return refuse(form, e);
		}
	},
	save: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(partTopReadingSchema));
		if (!form.valid) return refuse(form, null);
		let saved;
		try {
			saved = await withShop(shop, async (trx) => {
				const machine = await machineFromParam(trx, event.params.machine);
				return recordPartTopReading(
					trx,
					machine,
					event.params.fixture,
					form.data,
					actorOf(event, user)
				);
			});
		} catch (e) {
			return refuse(form, e);
		}
		redirect(
			303,
			`/shops/${shop.slug}/machines/${event.params.machine}/history/work/${encodeURIComponent(saved.preview.register)}?saved=${saved.readingId}`
		);
	}
};
