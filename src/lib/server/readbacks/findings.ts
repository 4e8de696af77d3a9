/**
 * Findings from read-backs (issue 16), stored with the shop check's findings so the fleet board,
 * the findings page, acknowledging and the morning digest treat them like any other:
 * - `readback-mismatch` (Stop), per register: the newest read-back of its current version found
 *   the control holding something else;
 * - `unverified` (Caution), per machine: registers in use by active setups changed in Datumkeep
 *   more than the shop's hours ago and not verified at the control since.
 * The shop check adds them to the engine's findings; recording a read-back updates them at once
 * (syncReadbackFindings) so a lead sees a mismatch before the next check.
 */
import type { Knex } from 'knex';
import {
	componentRowLabel,
	formatWithUnits,
	makeFinding,
	READBACK_CAUSE_TITLE,
	READBACK_FINDING_KINDS,
	type Finding,
	type ReadbackCause,
	type ReadbackComponent,
	type FindingSubject
} from '$lib/offsets';
import type { MachineRecord } from '../offsets/machine-state';
import { storeFindings } from '../fleet/check';
import { machineVerification, registersInUse, type RegisterVerification } from './status';

/** Our default (shop policy): one shift. A shop sets its own in public.shops.readback_hours. */
export const DEFAULT_READBACK_HOURS = 8;

const HOUR_MS = 3_600_000;
const label = (v: Pick<RegisterVerification, 'kind' | 'register'>) =>
	v.kind === 'tool' ? `H${v.register}` : v.register;
const subjectOf = (v: Pick<RegisterVerification, 'kind' | 'register'>): FindingSubject =>
	v.kind === 'tool' ? { type: 'tool', h: v.register } : { type: 'fixture', register: v.register };

/** The read-back findings of one machine as of `now` (pure over the rows given). */
export function readbackFindingsFrom(
	machine: Pick<MachineRecord, 'units' | 'resolution'>,
	registers: RegisterVerification[],
	used: { work: string[]; tools: string[] },
	now: Date,
	hours: number
): Finding[] {
	const fmt = (v: number) => formatWithUnits(v, machine.units, machine.resolution);
	const out: Finding[] = [];
	for (const v of registers) {
		if (v.state !== 'mismatched') continue;
		out.push(
			makeFinding(
				'readback-mismatch',
				'stop',
				subjectOf(v),
				`${label(v)} at the control holds ${fmt(v.controlValue ?? 0)}, but Datumkeep computed ${fmt(v.value)}${v.cause && v.cause !== 'unexplained' ? ` (likely cause: ${READBACK_CAUSE_TITLE[v.cause as ReadbackCause].toLowerCase()})` : ''}; read back ${v.readbackAt?.slice(0, 16).replace('T', ' ')} UTC. Enter ${fmt(v.value)} at the control, then read it back again before running.`,
				{ value: v.value, control: v.controlValue ?? 0 }
			)
		);
	}
	const inUse = new Set([
		...used.work.map((r) => `work|${r}`),
		...used.tools.map((h) => `tool|${h}`)
	]);
	const late = registers.filter(
		(v) =>
			v.state === 'unverified' &&
			inUse.has(`${v.kind}|${v.register}`) &&
			now.getTime() - new Date(v.changedAt).getTime() > hours * HOUR_MS
	);
	if (late.length > 0) {
		const names = late.map(label).join(', ');
		out.push(
			makeFinding(
				'unverified',
				'caution',
				{ type: 'machine' },
				`${late.length === 1 ? `${names} was` : `${late.length} registers in use (${names}) were`} changed in Datumkeep more than ${hours} hours ago and not verified at the control since. Read ${late.length === 1 ? 'it' : 'them'} back at the control before the next run.`,
				{ registers: names, hours }
			)
		);
	}
	return out;
}

/** The shop's policy hours (public.shops.readback_hours). */
export async function readbackHours(trx: Knex.Transaction, shopId: number): Promise<number> {
	const row = await trx('public.shops').where({ id: shopId }).first('readback_hours');
	return row?.readback_hours ?? DEFAULT_READBACK_HOURS;
}

/** The read-back findings of one machine, from the database. */
export async function readbackFindings(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now: Date,
	hours: number
): Promise<Finding[]> {
	const registers = await machineVerification(trx, machine.id);
	const used = await registersInUse(trx, machine.id);
	return [
		...readbackFindingsFrom(machine, registers, used, now, hours),
		...(await componentMismatches(trx, machine))
	];
}

/**
 * Beside Z (issue 20): a component whose newest compared read-back row was taken against its
 * current version and found different is a `readback-mismatch` Stop, subject "G54 X" /
 * "H3 radius wear" (as the component's own findings name it). A new version of the component
 * (re-measured, or entered to match) ends it, as for Z.
 */
export async function componentMismatches(
	trx: Knex.Transaction,
	machine: MachineRecord
): Promise<Finding[]> {
	const { rows } = await trx.raw(
		`select c.register_kind, c.register, c.component, c.value, v.value as control_value,
			v.causes, r.taken_at
		from current_offset_components c
		join (select distinct on (v.register_kind, v.register)
				v.register_kind, v.register, v.status, v.component_version_id, v.value, v.causes,
				v.readback_id
			from readback_values v
			where v.machine_id = :machineId and v.status in ('equal', 'different')
				and v.register_kind in ('x', 'y', 'radius', 'length-wear', 'radius-wear')
			order by v.register_kind, v.register, v.readback_id desc) v
			on v.register_kind = c.component and v.register = c.register
				and v.component_version_id = c.version_id
		join readbacks r on r.id = v.readback_id
		where c.machine_id = :machineId and v.status = 'different'
		order by c.register_kind, c.register, c.component`,
		{ machineId: machine.id }
	);
	const fmt = (v: number) => formatWithUnits(v, machine.units, machine.resolution);
	return rows.map((r: Record<string, unknown>) => {
		const kind = r.register_kind === 'work' ? 'work' : 'tool';
		const component = r.component as ReadbackComponent;
		const label = componentRowLabel(
			kind === 'work' ? 'work' : 'tools',
			String(r.register),
			component,
			machine.extendedAddress
		);
		const cause = (r.causes as { kind: string }[] | null)?.[0]?.kind;
		const value = Number(r.value);
		const control = Number(r.control_value);
		const subject: FindingSubject =
			kind === 'work'
				? { type: 'fixture', register: label }
				: { type: 'tool', h: label.replace(/^H/, '') };
		return makeFinding(
			'readback-mismatch',
			'stop',
			subject,
			`${label} at the control holds ${fmt(control)}, but Datumkeep has ${fmt(value)}${cause && cause !== 'unexplained' ? ` (likely cause: ${READBACK_CAUSE_TITLE[cause as ReadbackCause].toLowerCase()})` : ''}; read back ${new Date(r.taken_at as string).toISOString().slice(0, 16).replace('T', ' ')} UTC. Enter ${fmt(value)} at the control, then read it back again before running.`,
			{ value, control }
		);
	});
}

/**
 * Brings the machine's stored read-back findings up to date now (after a read-back): refreshes
 * what is still found, opens what is new (a problem found again after it was resolved is a new
 * row linked to the old one, as the shop check does), and resolves read-back findings no longer
 * found. Keys are the shop check's (`m<machine>|<kind>|<subject>`), so the next check agrees.
 */
export async function syncReadbackFindings(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now: Date,
	hours: number,
	setupNames: Map<string, string>
): Promise<void> {
	const found = await readbackFindings(trx, machine, now, hours);
	await storeFindings(
		trx,
		machine.id,
		found,
		now,
		{ comment: 'no longer found after a read-back at the control' },
		setupNames,
		READBACK_FINDING_KINDS
	);
}
