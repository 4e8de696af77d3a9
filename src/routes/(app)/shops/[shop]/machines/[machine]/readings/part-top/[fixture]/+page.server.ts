import { error } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { partTopReadingSchema } from '$lib/schemas/readings';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { correctingReading, lastPartTopToolId } from '$lib/server/readings/correcting';
import { previewAction, saveAction } from '$lib/server/readings/form';
import { findFixture } from '$lib/server/readings/lookups';
import { prefillReading } from '$lib/server/readings/prefill';
import { previewPartTopReading } from '$lib/server/readings/preview';
import { recordPartTopReading } from '$lib/server/readings/record';
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
		const corrects = await correctingReading(
			trx,
			machine.id,
			{ fixtureId: fixture.id },
			event.url.searchParams.get('corrects')
		);
		// The tool of the corrected reading, else the one that touched last, else any measured one.
		const defaultTool =
			corrects?.toolId ??
			(await lastPartTopToolId(trx, machine.id, fixture.id)) ??
			tools.find((t) => t.value !== null)?.id ??
			'';
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
		const member = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(partTopReadingSchema));
		return previewAction(event, member, form, async (trx, machine) => {
			return (await previewPartTopReading(trx, machine, event.params.fixture, form.data)).preview;
		});
	},
	save: async (event) => {
		const member = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(partTopReadingSchema));
		return saveAction(
			event,
			member,
			form,
			(trx, machine, actor) =>
				recordPartTopReading(trx, machine, event.params.fixture, form.data, actor),
			(saved) =>
				`/shops/${member.shop.slug}/machines/${event.params.machine}/history/work/${encodeURIComponent(saved.preview.register)}?saved=${saved.readingId}`
		);
	}
};
