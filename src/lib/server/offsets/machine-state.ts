import type { Knex } from 'knex';
import { iso } from '../db/convert';
import { shopPolicy } from '../shops/settings';
import {
	checkOffsets,
	type CheckInput,
	type Convention,
	type ControlStyle,
	type ExtendedAddressForm,
	type Finding,
	type HistoryEntry,
	type Machine,
	type OffsetTable,
	type Setup
} from '$lib/offsets';

import { clearanceSetup, masterTouchZOf } from './clearance-setup';

/** A machine row as the pages and the engine need it. `trx` below is always a shop transaction (withShop). */
export interface MachineRecord {
	id: number;
	name: string;
	units: 'inch' | 'mm';
	zTravel: number;
	resolution: number;
	controlStyle: ControlStyle;
	convention: Convention;
	masterToolH: number | null;
	notes: string;
	createdAt: string;
	hasPhoto: boolean;
	/** How many extended work offsets the control has (0–48) and how its programs address them. */
	extendedWorkOffsets: number;
	extendedAddress: ExtendedAddressForm;
}

export interface ReferenceRecord {
	id: number;
	version: number;
	instrument: string;
	height: number;
	location: string;
	gaugeLineZ: number | null;
	establishedBy: number | null;
	establishedByName: string | null;
	establishedAt: string;
	note: string;
}

/** One register's current value with where it came from. */
export interface CurrentOffset {
	kind: 'work' | 'tool';
	register: string;
	value: number;
	measuredAt: string;
	referenceVersion: number;
	readingId: number | null;
	offsetVersionId: number;
}

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));

export function toMachineRecord(r: Record<string, unknown>): MachineRecord {
	return {
		id: Number(r.id),
		name: String(r.name),
		units: r.units as 'inch' | 'mm',
		zTravel: Number(r.z_travel),
		resolution: Number(r.resolution),
		controlStyle: r.control_style as ControlStyle,
		convention: r.convention as Convention,
		masterToolH: num(r.master_tool_h),
		notes: String(r.notes ?? ''),
		createdAt: iso(r.created_at),
		hasPhoto: Boolean(r.photo_key),
		extendedWorkOffsets: Number(r.extended_work_offsets ?? 0),
		extendedAddress: (r.extended_address as ExtendedAddressForm | undefined) ?? 'G54.1 P'
	};
}

export async function getMachine(
	trx: Knex.Transaction,
	machineId: number
): Promise<MachineRecord | undefined> {
	if (!Number.isSafeInteger(machineId) || machineId <= 0) return undefined;
	const r = await trx('machines').where({ id: machineId }).whereNull('archived_at').first();
	return r ? toMachineRecord(r) : undefined;
}

/** The machine as the engine wants it (DESIGN.md §4 Machine). */
export function engineMachine(m: MachineRecord): Machine {
	return {
		id: String(m.id),
		name: m.name,
		units: m.units,
		zTravel: m.zTravel,
		resolution: m.resolution,
		convention: m.convention,
		controlStyle: m.controlStyle,
		extendedWorkOffsets: m.extendedWorkOffsets,
		extendedAddress: m.extendedAddress,
		...(m.masterToolH ? { masterTool: String(m.masterToolH) } : {})
	};
}

/** Every version of the machine's reference, newest first. */
export async function listReferences(
	trx: Knex.Transaction,
	machineId: number
): Promise<ReferenceRecord[]> {
	const rows = await trx('reference_surfaces as r')
		.leftJoin('public.users as u', 'u.id', 'r.established_by')
		.where('r.machine_id', machineId)
		.orderBy('r.version', 'desc')
		.select('r.*', 'u.name as established_by_name');
	return rows.map(referenceFrom);
}

/** A reference_surfaces row (with established_by_name) as a ReferenceRecord. */
export function referenceFrom(r: Record<string, unknown>): ReferenceRecord {
	return {
		id: Number(r.id),
		version: Number(r.version),
		instrument: String(r.instrument),
		height: Number(r.height),
		location: String(r.location),
		gaugeLineZ: num(r.gauge_line_z),
		establishedBy: num(r.established_by),
		establishedByName: (r.established_by_name as string | null) ?? null,
		establishedAt: iso(r.established_at),
		note: String(r.note)
	};
}

/**
 * The newest offset version of every register of the machine, read from `current_offsets`
 * (kept by a trigger on offset_versions: the row a DISTINCT ON over the versions would give).
 */
export async function currentOffsets(
	trx: Knex.Transaction,
	machineId: number
): Promise<CurrentOffset[]> {
	const rows = await trx('current_offsets')
		.where({ machine_id: machineId })
		.orderBy([{ column: 'register_kind' }, { column: 'register' }])
		.select(CURRENT_OFFSET_COLUMNS);
	return rows.map(currentOffsetFrom);
}

/** A current_offsets row as a CurrentOffset. */
export function currentOffsetFrom(r: Record<string, unknown>): CurrentOffset {
	return {
		kind: r.register_kind as 'work' | 'tool',
		register: String(r.register),
		value: Number(r.value),
		measuredAt: iso(r.created_at),
		referenceVersion: Number(r.reference_version),
		readingId: num(r.reading_id),
		offsetVersionId: Number(r.offset_version_id)
	};
}

/** The columns of current_offsets that currentOffsetFrom reads. */
export const CURRENT_OFFSET_COLUMNS = [
	'register_kind',
	'register',
	'value',
	'created_at',
	'reference_version',
	'reading_id',
	'offset_version_id'
];

/** The machine's current table in the engine's shape (its own convention and units). */
export function tableFrom(machine: MachineRecord, offsets: CurrentOffset[]): OffsetTable {
	const table: OffsetTable = {
		convention: machine.convention,
		units: machine.units,
		work: {},
		tools: {}
	};
	for (const o of offsets) (o.kind === 'work' ? table.work : table.tools)[o.register] = o.value;
	if (machine.convention === 'master-tool' && machine.masterToolH)
		table.masterTool = String(machine.masterToolH);
	return table;
}

/** Recorded values per register, oldest first, with tool changes, for the engine's history checks. */
export async function offsetHistory(
	trx: Knex.Transaction,
	machineId: number,
	convention: Convention,
	excludeReadingId?: number
): Promise<NonNullable<CheckInput['history']>> {
	const rows = await historyQuery(trx)
		.where('o.machine_id', machineId)
		.andWhere('o.convention', convention)
		.modify((q) => {
			if (excludeReadingId) q.whereRaw('o.reading_id is distinct from ?', [excludeReadingId]);
		});
	return historyFrom(rows);
}

/**
 * The offset versions that are baselines for the engine's history checks, oldest first (the
 * caller narrows it to a machine and its convention, or to several machines).
 */
export function historyQuery(trx: Knex.Transaction) {
	return (
		trx('offset_versions as o')
			.leftJoin('readings as r', 'r.id', 'o.reading_id')
			// A reading corrected by a later one was wrong: it is no baseline for jumps and slips.
			.whereRaw('not exists (select 1 from readings c where c.corrects_reading_id = o.reading_id)')
			// Nor is a value saved over a Stop (an override): the next reading is compared with the
			// value before it, and the overridden value itself keeps its Stop (it has no record).
			.whereRaw('coalesce(cardinality(r.overridden_findings), 0) = 0')
			.orderBy([{ column: 'o.created_at' }, { column: 'o.id' }])
			.select(
				'o.register_kind',
				'o.register',
				'o.value',
				'o.created_at',
				'r.tool_changed',
				'r.kind as reading_kind'
			)
	);
}

/** The history rows of one machine (oldest first) in the engine's shape. */
export function historyFrom(rows: Record<string, unknown>[]): NonNullable<CheckInput['history']> {
	const history: { work: Record<string, HistoryEntry[]>; tools: Record<string, HistoryEntry[]> } = {
		work: {},
		tools: {}
	};
	for (const r of rows) {
		const bucket = r.register_kind === 'work' ? history.work : history.tools;
		(bucket[r.register as string] ??= []).push({
			value: Number(r.value),
			at: iso(r.created_at),
			...(r.tool_changed ? { toolChange: true } : {})
		});
	}
	return history;
}

/**
 * The machine's setups that are on the table or planned, in the engine's shape (for
 * out-of-travel and clearance), built by the one clearance builder (./clearance-setup).
 */
export async function engineSetups(
	trx: Knex.Transaction,
	machine: MachineRecord,
	table: OffsetTable,
	geometry: { referenceGaugeLineZ?: number | null; masterTouchZ?: number | null }
): Promise<Setup[]> {
	const setups = await trx('setups')
		.where({ machine_id: machine.id })
		.whereIn('status', ['planned', 'on-machine', 'proven'])
		.select('id', 'name', 'clearance_margin');
	if (setups.length === 0) return [];
	const ids = setups.map((s) => s.id);
	// One connection per transaction: queries run one after another, never with Promise.all.
	const fixtures = await trx('setup_fixtures as sf')
		.join('fixtures as f', 'f.id', 'sf.fixture_id')
		.whereIn('sf.setup_id', ids)
		.select('sf.setup_id', 'f.register', 'sf.obstacle_height');
	const tools = await trx('setup_tools as st')
		.join('tools as t', 't.id', 'st.tool_id')
		.whereIn('st.setup_id', ids)
		.select('st.setup_id', 't.h_number');
	return engineSetupsFrom(machine, table, geometry, { setups, fixtures, tools });
}

/** A machine's active setups with their fixtures and tools, as rows (see engineSetups). */
export interface SetupRows {
	setups: { id: number | string; name: string; clearance_margin: unknown }[];
	fixtures: { setup_id: number | string; register: string; obstacle_height: unknown }[];
	tools: { setup_id: number | string; h_number: number | string }[];
}

/** engineSetups over rows already read (the shop check reads them for every machine at once). */
export function engineSetupsFrom(
	machine: MachineRecord,
	table: OffsetTable,
	geometry: { referenceGaugeLineZ?: number | null; masterTouchZ?: number | null },
	{ setups, fixtures, tools }: SetupRows
): Setup[] {
	const g = {
		referenceGaugeLineZ: geometry.referenceGaugeLineZ ?? null,
		masterTouchZ: geometry.masterTouchZ ?? null
	};
	const out: Setup[] = [];
	for (const s of setups) {
		const built = clearanceSetup(
			machine,
			Number(s.clearance_margin),
			fixtures
				.filter((f) => f.setup_id === s.id)
				.map((f) => ({
					register: f.register,
					workOffset: table.work[f.register] ?? null,
					obstacleHeight: Number(f.obstacle_height)
				})),
			g,
			{
				id: String(s.id),
				name: s.name,
				tools: tools.filter((t) => t.setup_id === s.id).map((t) => ({ h: String(t.h_number) }))
			}
		);
		if (built) out.push(built);
	}
	return out;
}

export interface MachineState {
	machine: MachineRecord;
	reference: ReferenceRecord | null;
	offsets: CurrentOffset[];
	table: OffsetTable;
	checkInput: CheckInput;
	findings: Finding[];
}

/**
 * Everything the checks need about one machine, and the engine's findings for it as of `now`.
 * `overrides` lets a preview ask "what if this value were saved?" without writing anything.
 */
export async function machineState(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now = new Date(),
	overrides?: {
		kind: 'work' | 'tool';
		register: string;
		value: number;
		toolChange?: boolean;
		/** The preview is a correction of this reading: leave it out of the history. */
		correctsReadingId?: number;
	}
): Promise<MachineState> {
	const references = await listReferences(trx, machine.id);
	const offsets = await currentOffsets(trx, machine.id);
	const history = await offsetHistory(
		trx,
		machine.id,
		machine.convention,
		overrides?.correctsReadingId
	);
	const reference = references[0] ?? null;
	const table = tableFrom(machine, offsets);
	applyOverride(table, history, now, overrides);
	const setups = await engineSetups(trx, machine, table, {
		referenceGaugeLineZ: reference?.gaugeLineZ,
		masterTouchZ: await masterTouchZOf(trx, machine)
	});
	return stateFrom(machine, reference, offsets, table, history, setups, await shopPolicy(trx), now);
}

/** A preview's "what if this value were saved?" put into the table and history in place. */
function applyOverride(
	table: OffsetTable,
	history: NonNullable<CheckInput['history']>,
	now: Date,
	overrides?: { kind: 'work' | 'tool'; register: string; value: number; toolChange?: boolean }
) {
	if (overrides) {
		(overrides.kind === 'work' ? table.work : table.tools)[overrides.register] = overrides.value;
		const bucket = overrides.kind === 'work' ? (history.work ??= {}) : (history.tools ??= {});
		(bucket[overrides.register] ??= []).push({
			value: overrides.value,
			at: now.toISOString(),
			...(overrides.toolChange ? { toolChange: true } : {})
		});
	}
}

/**
 * The pure end of machineState: the engine's input and findings from what was read. The shop
 * check (fleet/check-batch.ts) reads the same things for all machines at once and calls this.
 */
export function stateFrom(
	machine: MachineRecord,
	reference: ReferenceRecord | null,
	offsets: CurrentOffset[],
	table: OffsetTable,
	history: NonNullable<CheckInput['history']>,
	setups: Setup[],
	policy: CheckInput['policy'],
	now: Date
): MachineState {
	const used = {
		work: [...new Set(setups.flatMap((s) => s.fixtures.map((f) => f.register)))],
		tools: [...new Set(setups.flatMap((s) => (s.tools ?? []).map((t) => t.h)))]
	};
	const checkInput: CheckInput = {
		machine: engineMachine(machine),
		// The shop's own limits (settings page); fields it left empty are the engine's defaults.
		policy,
		table,
		history,
		now: now.toISOString(),
		setups,
		used,
		...(reference ? { referenceEstablishedAt: reference.establishedAt } : {})
	};
	return { machine, reference, offsets, table, checkInput, findings: checkOffsets(checkInput) };
}
