import { fail, redirect } from '@sveltejs/kit';
import {
	cutterRegisterSchema,
	edgeReadingSchema,
	partMeasurementSchema,
	toolRegisterSchema
} from '$lib/schemas/components';
import { can } from '$lib/permissions';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { actorOf } from '$lib/server/readings/form';
import { previewEdgeReading, recordEdgeReading } from '$lib/server/components/edge';
import { readForm, refuseForm } from '$lib/server/components/form';
import {
	currentComponents,
	recentComponentVersions,
	setCutterRegister
} from '$lib/server/components/store';
import {
	acceptPartWear,
	previewPartWear,
	recordToolRegister,
	toolRegisters
} from '$lib/server/components/tool-registers';
import { ReadingInputError } from '$lib/server/readings/input';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const [components, registers, fixtures, edges, versions] = await Promise.all([
			currentComponents(trx, machine.id),
			toolRegisters(trx, machine),
			trx('fixtures')
				.where({ machine_id: machine.id })
				.whereNull('archived_at')
				.orderBy('register')
				.select('register', 'name'),
			trx('edge_readings as e')
				.leftJoin('public.users as u', 'u.id', 'e.taken_by')
				.where('e.machine_id', machine.id)
				.orderBy([
					{ column: 'e.taken_at', order: 'desc' },
					{ column: 'e.id', order: 'desc' }
				])
				.limit(20)
				.select('e.*', 'u.name as by'),
			recentComponentVersions(trx, machine.id)
		]);
		const work = fixtures.map((f) => ({
			register: String(f.register),
			name: String(f.name),
			x:
				components.find(
					(c) => c.kind === 'work' && c.register === f.register && c.component === 'x'
				) ?? null,
			y:
				components.find(
					(c) => c.kind === 'work' && c.register === f.register && c.component === 'y'
				) ?? null
		}));
		return {
			machine,
			work,
			versions,
			registers,
			canLead: can(role, 'machines.write'),
			edges: edges.map((e) => ({
				id: Number(e.id),
				register: String(e.register),
				axis: String(e.axis),
				datum: String(e.datum),
				feature: e.feature as string | null,
				first: Number(e.first_coordinate),
				firstSide: String(e.first_side),
				second: e.second_coordinate === null ? null : Number(e.second_coordinate),
				secondSide: e.second_side as string | null,
				probe: Number(e.probe_diameter),
				position: Number(e.position),
				overrideReason: String(e.override_reason),
				by: (e.by as string | null) ?? null,
				at: new Date(e.taken_at).toISOString()
			}))
		};
	});
};

export const actions: Actions = {
	cutterRegister: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const f = await readForm(event.request, cutterRegisterSchema);
		if (!f.ok) return fail(400, { which: 'cutter', values: f.raw, issues: f.issues });
		try {
			await withShop(shop, async (trx) =>
				setCutterRegister(
					trx,
					await machineFromParam(trx, event.params.machine),
					f.data.cutterRegister,
					actorOf(event, user)
				)
			);
		} catch (e) {
			return refuseForm('cutter', f.raw, e);
		}
		redirect(303, `${event.url.pathname}?saved=cutter#wear`);
	},
	edgePreview: async (event) => {
		const { shop } = await requireMember(event, 'setups.write');
		const f = await readForm(event.request, edgeReadingSchema);
		if (!f.ok) return fail(400, { which: 'edge', values: f.raw, issues: f.issues });
		try {
			const preview = await withShop(shop, async (trx) =>
				previewEdgeReading(trx, await machineFromParam(trx, event.params.machine), f.data)
			);
			return { which: 'edge', values: f.raw, edgePreview: preview };
		} catch (e) {
			return refuseForm('edge', f.raw, e);
		}
	},
	edgeSave: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const f = await readForm(event.request, edgeReadingSchema);
		if (!f.ok) return fail(400, { which: 'edge', values: f.raw, issues: f.issues });
		let saved;
		try {
			saved = await withShop(shop, async (trx) =>
				recordEdgeReading(
					trx,
					await machineFromParam(trx, event.params.machine),
					f.data,
					actorOf(event, user)
				)
			);
		} catch (e) {
			const preview =
				e instanceof ReadingInputError && e.issues.some((i) => i.field === 'overrideReason')
					? await withShop(shop, async (trx) =>
							previewEdgeReading(trx, await machineFromParam(trx, event.params.machine), f.data)
						).catch(() => null)
					: null;
			return refuseForm('edge', f.raw, e, { edgePreview: preview, needsOverride: !!preview });
		}
		redirect(303, `${event.url.pathname}?saved=edge-${saved.edgeReadingId}#xy`);
	},
	register: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const f = await readForm(event.request, toolRegisterSchema);
		if (!f.ok) return fail(400, { which: 'register', values: f.raw, issues: f.issues });
		let saved;
		try {
			saved = await withShop(shop, async (trx) =>
				recordToolRegister(
					trx,
					await machineFromParam(trx, event.params.machine),
					f.data,
					actorOf(event, user)
				)
			);
		} catch (e) {
			const needsOverride =
				e instanceof ReadingInputError && e.issues.some((i) => i.field === 'overrideReason');
			return refuseForm('register', f.raw, e, { needsOverride });
		}
		redirect(303, `${event.url.pathname}?saved=register-${saved.versionId}#wear`);
	},
	partPreview: async (event) => {
		const { shop } = await requireMember(event, 'machines.write');
		const f = await readForm(event.request, partMeasurementSchema);
		if (!f.ok) return fail(400, { which: 'part', values: f.raw, issues: f.issues });
		try {
			const proposal = await withShop(shop, async (trx) =>
				previewPartWear(trx, await machineFromParam(trx, event.params.machine), f.data)
			);
			return { which: 'part', values: f.raw, proposal };
		} catch (e) {
			return refuseForm('part', f.raw, e);
		}
	},
	partAccept: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const f = await readForm(event.request, partMeasurementSchema);
		if (!f.ok) return fail(400, { which: 'part', values: f.raw, issues: f.issues });
		let saved;
		try {
			saved = await withShop(shop, async (trx) =>
				acceptPartWear(
					trx,
					await machineFromParam(trx, event.params.machine),
					{ ...f.data, accept: true },
					actorOf(event, user)
				)
			);
		} catch (e) {
			const proposal =
				e instanceof ReadingInputError && e.issues.some((i) => i.field === 'overrideReason')
					? await withShop(shop, async (trx) =>
							previewPartWear(trx, await machineFromParam(trx, event.params.machine), f.data)
						).catch(() => null)
					: null;
			return refuseForm('part', f.raw, e, { proposal, needsOverride: !!proposal });
		}
		redirect(303, `${event.url.pathname}?saved=part-${saved.partMeasurementId}#wear`);
	}
};
