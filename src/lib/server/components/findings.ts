/**
 * The shop check's findings on the offset components beside Z (issue 20), for one machine: what
 * the components page and the load-program gate already say, stored like every other finding so
 * the fleet board, the findings page and the digest show it with the same acknowledgement flow.
 *
 * - `wear-limit` (Stop): a current length or radius wear beyond the shop's limit.
 * - `stale-age` (Caution): a work offset's X or Y older than the shop's work-offset age limit
 *   (the same limit and words as Z; the load-program gate withholds it too).
 * - Slips and `approach-side` (Stop): the current X or Y against the version before it, by the
 *   same rules as when it was recorded (`checkEdgeValue`). A plain jump is not repeated here: an
 *   X/Y moves whenever a fixture or part is moved, which the reading preview already asked about.
 *
 * Registers of archived fixtures and tools are left out. Nothing is written: the caller stores
 * the result with the machine's other findings (fleet/check.ts, fleet/recheck.ts).
 */
import type { Knex } from 'knex';
import {
	checkEdgeValue,
	checkWearValue,
	makeFinding,
	resolvePolicy,
	type ApproachSide,
	type Finding
} from '$lib/offsets';
import type { MachineRecord } from '../offsets/machine-state';
import { shopPolicy } from '../shops/settings';
import { wearLimitFor } from './tool-registers';

const DAY_MS = 86_400_000;

interface VersionRow {
	register_kind: 'work' | 'tool';
	register: string;
	component: 'x' | 'y' | 'radius' | 'length-wear' | 'radius-wear';
	value: string | number;
	created_at: Date | string;
	rank: number | string;
	first_side: string | null;
	second_coordinate: string | number | null;
}

export async function componentFindings(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now: Date
): Promise<Finding[]> {
	// The newest two versions of every component still in use (one statement, ranked).
	const { rows } = (await trx.raw(
		`select v.register_kind, v.register, v.component, v.value, v.created_at, v.rank,
			e.first_side, e.second_coordinate
		from (
			select ocv.*, row_number() over (
				partition by ocv.register_kind, ocv.register, ocv.component
				order by ocv.created_at desc, ocv.id desc) as rank
			from offset_component_versions ocv
			where ocv.machine_id = :machineId and ocv.created_at <= :now
		) v
		left join edge_readings e on e.id = v.edge_reading_id
		where v.rank <= 2
			and case v.register_kind
				when 'work' then exists (select 1 from fixtures f where f.machine_id = :machineId
					and f.register = v.register and f.archived_at is null)
				else exists (select 1 from tools t where t.machine_id = :machineId
					and t.h_number::text = v.register and t.archived_at is null)
			end
		order by v.register_kind, v.register, v.component, v.rank`,
		{ machineId: machine.id, now: now.toISOString() }
	)) as { rows: VersionRow[] };
	if (rows.length === 0) return [];
	const policy = resolvePolicy(await shopPolicy(trx), machine.units);
	const limit = await wearLimitFor(trx, machine);
	const out: Finding[] = [];
	const sideOf = (r: VersionRow | undefined): ApproachSide | undefined =>
		r && r.first_side && r.second_coordinate === null ? (r.first_side as ApproachSide) : undefined;

	for (const r of rows) {
		if (Number(r.rank) !== 1) continue;
		const value = Number(r.value);
		if (r.register_kind === 'tool') {
			if (r.component === 'length-wear' || r.component === 'radius-wear')
				out.push(
					...checkWearValue({
						units: machine.units,
						resolution: machine.resolution,
						h: r.register,
						component: r.component,
						value,
						limit
					})
				);
			continue;
		}
		const axis = r.component === 'x' ? 'X' : 'Y';
		const label = `${r.register} ${axis}`;
		const previous = rows.find(
			(p) =>
				Number(p.rank) === 2 &&
				p.register_kind === 'work' &&
				p.register === r.register &&
				p.component === r.component
		);
		if (previous) {
			out.push(
				...checkEdgeValue({
					units: machine.units,
					resolution: machine.resolution,
					policy,
					register: r.register,
					axis,
					value,
					side: sideOf(r),
					// The probe is not needed for the kinds kept here (slips, side); 0 keeps the
					// "about one probe diameter" remark out of a message the board repeats nightly.
					probeDiameter: 0,
					previous: { value: Number(previous.value), side: sideOf(previous) }
				}).filter((f) => f.severity === 'stop')
			);
		}
		const ageDays = (now.getTime() - new Date(r.created_at).getTime()) / DAY_MS;
		if (ageDays > policy.workMaxAgeDays)
			out.push(
				makeFinding(
					'stale-age',
					'caution',
					{ type: 'fixture', register: label },
					`${label} was last recorded ${Math.floor(ageDays)} days ago, past the shop's limit of ${policy.workMaxAgeDays} days for work offsets. Find the edge again before the next job.`,
					{ value, ageDays: Math.floor(ageDays), limitDays: policy.workMaxAgeDays }
				)
			);
	}
	return out;
}
