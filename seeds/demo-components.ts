import type { Knex } from 'knex';
import { centreFromEdges, edgePosition, proposeWear } from '$lib/offsets';
import type { DemoMachine } from './demo-data';

/**
 * The demo's offset components beside Z (issue 20): X/Y of work offsets from edge-finder
 * readings and wear from a measured part, worked out by the engine exactly as the pages do,
 * with the same append-only rows (edge_readings / part_measurements → offset_component_versions).
 */
export async function seedComponents(
	trx: Knex.Transaction,
	machineId: number,
	m: DemoMachine,
	ctx: { lead: number; operator: number; ago: (days: number) => Date }
): Promise<void> {
	for (const f of m.fixtures) {
		for (const e of f.edges ?? []) {
			const position =
				e.second === undefined
					? edgePosition({
							units: m.units,
							resolution: m.resolution,
							touch: { machineCoordinate: e.first[0], approachedFrom: e.first[1] },
							probeDiameter: e.probe
						})
					: centreFromEdges({
							units: m.units,
							resolution: m.resolution,
							axis: e.axis,
							feature: e.feature ?? 'outside',
							first: { machineCoordinate: e.first[0], approachedFrom: e.first[1] },
							second: { machineCoordinate: e.second[0], approachedFrom: e.second[1] },
							probeDiameter: e.probe
						}).centre;
			const centre = e.second !== undefined;
			const [row] = await trx('edge_readings')
				.insert({
					machine_id: machineId,
					register: f.register,
					axis: e.axis,
					datum: centre ? 'centre' : 'edge',
					feature: centre ? (e.feature ?? 'outside') : null,
					first_coordinate: e.first[0],
					first_side: e.first[1],
					second_coordinate: e.second?.[0] ?? null,
					second_side: e.second?.[1] ?? null,
					probe_diameter: e.probe,
					position,
					units: m.units,
					instrument: e.instrument,
					taken_by: ctx.operator,
					taken_at: ctx.ago(e.daysAgo)
				})
				.returning('id');
			await trx('offset_component_versions').insert({
				machine_id: machineId,
				register_kind: 'work',
				register: f.register,
				component: e.axis === 'X' ? 'x' : 'y',
				value: position,
				units: m.units,
				source: 'edge',
				edge_reading_id: row.id,
				created_by: ctx.operator,
				created_at: ctx.ago(e.daysAgo)
			});
		}
	}
	for (const t of m.tools) {
		let wear = 0;
		for (const p of t.wearFromPart ?? []) {
			const proposal = proposeWear({
				units: m.units,
				feature: p.feature,
				nominal: p.nominal,
				measured: p.measured,
				currentWear: wear,
				resolution: m.resolution
			});
			wear = proposal.newWear;
			const component = proposal.register === 'length' ? 'length-wear' : 'radius-wear';
			const [row] = await trx('part_measurements')
				.insert({
					machine_id: machineId,
					register: String(t.h),
					feature: p.feature,
					nominal: p.nominal,
					measured: p.measured,
					units: m.units,
					component,
					change: proposal.change,
					new_wear: proposal.newWear,
					explanation: proposal.explanation,
					note: p.note,
					taken_by: ctx.lead,
					taken_at: ctx.ago(p.daysAgo)
				})
				.returning('id');
			await trx('offset_component_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: String(t.h),
				component,
				value: proposal.newWear,
				units: m.units,
				cutter_register: component === 'radius-wear' ? 'radius' : null,
				source: 'part',
				part_measurement_id: row.id,
				reason: proposal.explanation,
				created_by: ctx.lead,
				created_at: ctx.ago(p.daysAgo)
			});
		}
	}
}
