/**
 * The offset components beside Z (issue 20): reading and writing `offset_component_versions`
 * (append-only) and `current_offset_components` (its newest row per register, kept by a
 * trigger). Z stays in offset_versions / current_offsets, untouched by this module. The
 * override gate is the readings' own (`requireOverride` in ../readings/record): a Stop value
 * is written only with "Save anyway" and a reason, whatever the page sent.
 */
import type { Knex } from 'knex';
import { findingTitle, formatWithUnits, type CutterRegisterMode } from '$lib/offsets';
import { audit } from '../audit';
import { recheckMachine, resolveOverride } from '../fleet/recheck';
import type { MachineRecord } from '../offsets/machine-state';
import { ReadingInputError } from '../readings/input';
import { requireOverride, type OverrideChoice } from '../readings/override';
import type { Actor } from '$lib/server/actor';
import type { BriefFinding, ReadingPreview } from '$lib/reading-preview';

export type ComponentKind = 'x' | 'y' | 'radius' | 'length-wear' | 'radius-wear';

/** One register's components as they stand now. */
export interface CurrentComponent {
	kind: 'work' | 'tool';
	register: string;
	component: ComponentKind;
	value: number;
	at: string;
	versionId: number;
}

/** Where a machine keeps its cutter registers: radius or diameter (a machine setting). */
export async function cutterRegisterOf(
	trx: Knex.Transaction,
	machineId: number
): Promise<CutterRegisterMode> {
	const row = await trx('machines').where({ id: machineId }).first('cutter_register');
	return row?.cutter_register === 'diameter' ? 'diameter' : 'radius';
}

/** Every current component of the machine. */
export async function currentComponents(
	trx: Knex.Transaction,
	machineId: number
): Promise<CurrentComponent[]> {
	const rows = await trx('current_offset_components')
		.where({ machine_id: machineId })
		.orderBy(['register_kind', 'register', 'component']);
	return rows.map((r) => ({
		kind: r.register_kind,
		register: r.register,
		component: r.component,
		value: Number(r.value),
		at: new Date(r.created_at).toISOString(),
		versionId: Number(r.version_id)
	}));
}

/** One version of a component, newest first, with who and why. */
export interface ComponentVersion {
	id: number;
	value: number;
	source: 'edge' | 'entered' | 'part' | 'presetter';
	reason: string;
	overrideReason: string;
	by: string | null;
	at: string;
	edgeReadingId: number | null;
	partMeasurementId: number | null;
}

/** The history of one component (append-only rows, newest first). */
export async function componentHistory(
	trx: Knex.Transaction,
	machineId: number,
	kind: 'work' | 'tool',
	register: string,
	component: ComponentKind,
	limit = 50
): Promise<ComponentVersion[]> {
	const rows = await trx('offset_component_versions as v')
		.leftJoin('public.users as u', 'u.id', 'v.created_by')
		.where({
			'v.machine_id': machineId,
			'v.register_kind': kind,
			'v.register': register,
			'v.component': component
		})
		.orderBy([
			{ column: 'v.created_at', order: 'desc' },
			{ column: 'v.id', order: 'desc' }
		])
		.limit(limit)
		.select('v.*', 'u.name as by_name');
	return rows.map((r) => ({
		id: Number(r.id),
		value: Number(r.value),
		source: r.source,
		reason: r.reason,
		overrideReason: r.override_reason,
		by: r.by_name ?? null,
		at: new Date(r.created_at).toISOString(),
		edgeReadingId: r.edge_reading_id === null ? null : Number(r.edge_reading_id),
		partMeasurementId: r.part_measurement_id === null ? null : Number(r.part_measurement_id)
	}));
}

/** The newest value of one component, or null. */
export async function currentComponent(
	trx: Knex.Transaction,
	machineId: number,
	kind: 'work' | 'tool',
	register: string,
	component: ComponentKind
): Promise<number | null> {
	const row = await trx('current_offset_components')
		.where({ machine_id: machineId, register_kind: kind, register, component })
		.first('value');
	return row ? Number(row.value) : null;
}

/** The label people read: "G54 X", "H3 length wear". */
export function componentLabel(kind: 'work' | 'tool', register: string, c: ComponentKind) {
	if (kind === 'work') return `${register} ${c.toUpperCase()}`;
	return `H${register} ${c === 'radius' ? 'radius' : c === 'length-wear' ? 'length wear' : 'radius wear'}`;
}

/**
 * The Stop findings this value would go over, through the readings' override gate: throws a
 * ReadingInputError on `overrideReason` when there is a Stop and no "Save anyway" with a
 * reason; returns the overridden findings (or null) otherwise.
 */
export function gateComponent(
	machine: MachineRecord,
	label: string,
	value: number,
	findings: BriefFinding[],
	o: OverrideChoice
): BriefFinding[] | null {
	const preview: ReadingPreview = {
		registerKind: 'work',
		register: label,
		label,
		value,
		previous: null,
		previousAt: null,
		delta: null,
		findings,
		working: '',
		toolFindings: [],
		referenceVersion: 0
	};
	return requireOverride(machine, preview, o);
}

/** Writes one component version (and its audit entry, and an override finding when one). */
export async function writeComponentVersion(
	trx: Knex.Transaction,
	machine: MachineRecord,
	actor: Actor,
	v: {
		kind: 'work' | 'tool';
		register: string;
		component: ComponentKind;
		value: number;
		source: 'edge' | 'entered' | 'part' | 'presetter';
		cutterRegister?: CutterRegisterMode;
		edgeReadingId?: number;
		partMeasurementId?: number;
		/** A radius from the tool library's presetter measurement (tool-library/assign.ts). */
		presetterMeasurementId?: number;
		/** When it was recorded, for past events (demo data); default the database's now. */
		at?: Date;
		reason?: string;
		overridden: BriefFinding[] | null;
		overrideReason?: string;
	}
): Promise<number> {
	const [row] = await trx('offset_component_versions')
		.insert({
			machine_id: machine.id,
			register_kind: v.kind,
			register: v.register,
			component: v.component,
			value: v.value,
			units: machine.units,
			cutter_register: v.kind === 'tool' && v.component !== 'length-wear' ? v.cutterRegister : null,
			source: v.source,
			edge_reading_id: v.edgeReadingId ?? null,
			part_measurement_id: v.partMeasurementId ?? null,
			...(v.presetterMeasurementId ? { presetter_measurement_id: v.presetterMeasurementId } : {}),
			...(v.at ? { created_at: v.at } : {}),
			reason: v.reason ?? '',
			created_by: actor.id,
			...(v.overridden
				? {
						override_reason: (v.overrideReason ?? '').trim(),
						overridden_findings: [...new Set(v.overridden.map((f) => f.kind))]
					}
				: {})
		})
		.returning('id');
	const id = Number(row.id);
	const label = componentLabel(v.kind, v.register, v.component);
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'offset-component.recorded',
		target: `machine:${machine.id}`,
		detail: {
			machineId: machine.id,
			versionId: id,
			register: label,
			value: v.value,
			units: machine.units,
			source: v.source,
			...(v.overridden ? { overridden: v.overridden.map((f) => f.kind) } : {})
		}
	});
	const subjectKey = `${v.kind === 'tool' ? 'tool' : 'fixture'}:${label}`;
	if (!v.overridden) {
		// Findings follow the data, as for Z (readings/record.ts): a clean value of this
		// component replaces the one saved over a Stop, so its override finding is resolved.
		await resolveOverride(trx, machine.id, subjectKey, {
			what: `the new value of ${label} (version #${id})`,
			by: actor.id
		});
	} else {
		const titles = [...new Set(v.overridden.map((f) => findingTitle(f.kind)))].join('; ');
		const now = new Date().toISOString();
		const key = `m${machine.id}|override|${subjectKey}`;
		await trx.raw(
			`insert into findings as f (key, machine_id, kind, severity, subject_type, subject, message,
				status, first_seen_at, last_seen_at, previous_finding_id)
			values (:key, :machineId, 'override', 'stop', :subjectType, :subject, :message, 'open', :now, :now,
				(select p.id from findings p where p.key = :key and p.status = 'resolved'
					order by p.resolved_at desc nulls last, p.id desc limit 1))
			on conflict (key) where status <> 'resolved' do update set
				message = excluded.message, last_seen_at = excluded.last_seen_at`,
			{
				key,
				machineId: machine.id,
				subjectType: v.kind === 'tool' ? 'tool' : 'fixture',
				subject: label,
				message: `${label} was saved as ${formatWithUnits(v.value, machine.units, machine.resolution)} over a Stop (${titles}) by ${actor.email}: "${(v.overrideReason ?? '').trim()}". It stays out of load programs; check it at the control or re-measure it.`,
				now
			}
		);
	}
	// Findings follow the data: the machine's checks (read-back mismatches of this component
	// included) run again in this transaction, as after a reading.
	await recheckMachine(trx, machine, { what: `the new value of ${label}`, by: actor.id }, v.at);
	return id;
}

/**
 * Sets what the machine's D registers hold. Refused while the machine has radius values: they
 * would silently change meaning (a 0.25 radius read as a 0.25 diameter).
 */
export async function setCutterRegister(
	trx: Knex.Transaction,
	machine: MachineRecord,
	mode: CutterRegisterMode,
	actor: Actor
): Promise<void> {
	const before = await cutterRegisterOf(trx, machine.id);
	if (before === mode) return;
	const held = await trx('current_offset_components')
		.where({ machine_id: machine.id, register_kind: 'tool' })
		.whereIn('component', ['radius', 'radius-wear'])
		.first('register');
	if (held)
		throw ReadingInputError.of(
			'cutterRegister',
			`${machine.name} already holds ${before} values (e.g. D${held.register}); they would change meaning. Check the control's setting first; changing it needs those values re-entered by hand after.`
		);
	await trx('machines').where({ id: machine.id }).update({ cutter_register: mode });
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'machine.cutter-register',
		target: `machine:${machine.id}`,
		detail: { machineId: machine.id, from: before, to: mode }
	});
}

/** The machine's newest component versions (every register), newest first, for the page. */
export async function recentComponentVersions(
	trx: Knex.Transaction,
	machineId: number,
	limit = 30
): Promise<
	(ComponentVersion & {
		label: string;
		kind: 'work' | 'tool';
		register: string;
		component: ComponentKind;
	})[]
> {
	const rows = await trx('offset_component_versions as v')
		.leftJoin('public.users as u', 'u.id', 'v.created_by')
		.where('v.machine_id', machineId)
		.orderBy([
			{ column: 'v.created_at', order: 'desc' },
			{ column: 'v.id', order: 'desc' }
		])
		.limit(limit)
		.select('v.*', 'u.name as by_name');
	return rows.map((r) => ({
		id: Number(r.id),
		label: componentLabel(r.register_kind, r.register, r.component),
		kind: r.register_kind,
		register: String(r.register),
		component: r.component,
		value: Number(r.value),
		source: r.source,
		reason: r.reason,
		overrideReason: r.override_reason,
		by: r.by_name ?? null,
		at: new Date(r.created_at).toISOString(),
		edgeReadingId: r.edge_reading_id === null ? null : Number(r.edge_reading_id),
		partMeasurementId: r.part_measurement_id === null ? null : Number(r.part_measurement_id)
	}));
}
