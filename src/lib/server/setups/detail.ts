import type { Knex } from 'knex';
import { iso } from '../db/convert';
import {
	clearancePlanes,
	isOffsetInputError,
	tallestObstacle,
	type OffsetTable,
	type Setup
} from '$lib/offsets';
import type { SetupState } from '$lib/schemas/setups';
import {
	currentOffsets,
	getMachine,
	listReferences,
	toMachineRecord,
	type CurrentOffset,
	type MachineRecord,
	type ReferenceRecord
} from '../offsets/machine-state';
import {
	clearanceSetup,
	masterTouchZOf,
	zeroHeightFor,
	type ClearanceGeometry
} from '../offsets/clearance-setup';
import { gated, machineGate, type GatedRegister } from '../offsets/gate';

/** One setup in full (the setup page, the sheet, program checks). `trx` is a shop transaction. */

export interface SetupFixture {
	fixtureId: number;
	register: string;
	name: string;
	description: string;
	/** Tallest thing on this fixture above the reference, machine units. */
	obstacleHeight: number;
	/** Current work offset Z, or null when never measured. */
	workOffset: number | null;
	measuredAt: string | null;
	/** h_k: program zero above the reference, when it can be known. */
	zeroHeight: number | null;
	/** Lowest safe retract Z in this fixture's coordinates, from the engine. */
	clearance: number | null;
	/** The gate's verdict on this register (status, findings, measured when and by whom). */
	gate: GatedRegister;
}

export interface SetupTool {
	toolId: number;
	t: number;
	h: number;
	description: string;
	holder: string;
	offset: number | null;
	measuredAt: string | null;
	gate: GatedRegister;
}

export interface SetupOp {
	sequence: number;
	name: string;
	fixtureId: number | null;
	register: string | null;
	notes: string;
}

export interface SetupPhoto {
	id: number;
	caption: string;
	originalName: string;
	contentType: string;
	byteSize: number;
	uploadedAt: string;
	uploadedByName: string | null;
}

export interface StatusChange {
	from: SetupState | null;
	to: SetupState;
	at: string;
	byName: string | null;
	note: string;
}

export interface SetupDetail {
	id: number;
	name: string;
	job: string;
	status: SetupState;
	clearanceMargin: number;
	createdAt: string;
	createdByName: string | null;
	machine: MachineRecord;
	reference: ReferenceRecord | null;
	fixtures: SetupFixture[];
	tools: SetupTool[];
	ops: SetupOp[];
	photos: SetupPhoto[];
	history: StatusChange[];
	/** Geometry the clearance planes were worked out with (R, R + L_m when known). */
	geometry: ClearanceGeometry;
	clearance: {
		/** Register → lowest safe retract Z (fixture coordinates), from the engine. */
		planes: Record<string, number>;
		/** Tallest thing on the table above the reference. */
		tallest: number | null;
		/** Why some or all planes are missing, in plain words. */
		problems: string[];
	};
}

/**
 * The engine's Setup for these fixtures, by the one clearance builder
 * (server/offsets/clearance-setup): planes for fixtures with a known h_k, obstacles from all.
 */
export function engineSetupFor(
	machine: MachineRecord,
	margin: number,
	fixtures: Pick<SetupFixture, 'register' | 'workOffset' | 'obstacleHeight'>[],
	geometry: ClearanceGeometry,
	id?: string
): Setup | null {
	return clearanceSetup(machine, margin, fixtures, geometry, id ? { id } : {});
}

/** Why a fixture's program-zero height is not known (for the clearance column). */
function zeroHeightProblem(
	machine: MachineRecord,
	f: SetupFixture,
	reference: ReferenceRecord | null
): string | null {
	if (f.zeroHeight !== null) return null;
	if (f.workOffset === null)
		return `${f.register} has never been measured, so its clearance plane cannot be worked out yet.`;
	if (machine.convention === 'gauge-length' && reference?.gaugeLineZ == null)
		return `${f.register}: the reference's gauge-line Z is not known, so the part-top height above the reference cannot be worked out.`;
	return `${f.register}: the master tool (H${machine.masterToolH ?? '?'}) has no touch on the reference yet, so the part-top height above the reference cannot be worked out.`;
}

/** One setup with its machine, offsets, clearance planes, photos and history; undefined if none. */
export async function getSetupDetail(
	trx: Knex.Transaction,
	setupId: number
): Promise<SetupDetail | undefined> {
	if (!Number.isSafeInteger(setupId) || setupId <= 0) return undefined;
	const s = await trx('setups as s')
		.leftJoin('public.users as u', 'u.id', 's.created_by')
		.where('s.id', setupId)
		.first('s.*', 'u.name as created_by_name');
	if (!s) return undefined;
	// Archived machines still show their old setups.
	const machine =
		(await getMachine(trx, Number(s.machine_id))) ??
		(await trx('machines')
			.where({ id: s.machine_id })
			.first()
			.then((r) => (r ? toMachineRecord(r) : undefined)));
	if (!machine) return undefined;
	const references = await listReferences(trx, machine.id);
	const reference = references[0] ?? null;
	const offsets = await currentOffsets(trx, machine.id);
	const byRegister = new Map(offsets.map((o) => [`${o.kind}:${o.register}`, o]));
	const geometry: ClearanceGeometry = {
		referenceGaugeLineZ: reference?.gaugeLineZ ?? null,
		masterTouchZ: await masterTouchZOf(trx, machine)
	};
	// The gate: the engine's verdict on every register, with who measured it and when.
	const gate = await machineGate(trx, machine);

	const fxRows = await trx('setup_fixtures as sf')
		.join('fixtures as f', 'f.id', 'sf.fixture_id')
		.where('sf.setup_id', setupId)
		.orderBy('f.register')
		.select('f.id', 'f.register', 'f.name', 'f.description', 'sf.obstacle_height');
	const fixtures: SetupFixture[] = fxRows.map((r) => {
		const o: CurrentOffset | undefined = byRegister.get(`work:${r.register}`);
		const workOffset = o?.value ?? null;
		return {
			fixtureId: Number(r.id),
			register: r.register,
			name: r.name,
			description: r.description,
			obstacleHeight: Number(r.obstacle_height),
			workOffset,
			measuredAt: o?.measuredAt ?? null,
			zeroHeight: workOffset === null ? null : zeroHeightFor(machine, workOffset, geometry),
			clearance: null,
			gate: gated(gate, 'work', r.register)
		};
	});

	const margin = Number(s.clearance_margin);
	const problems = fixtures
		.map((f) => zeroHeightProblem(machine, f, reference))
		.filter((p): p is string => p !== null);
	let planes: Record<string, number> = {};
	let tallest: number | null = null;
	const engineSetup = engineSetupFor(machine, margin, fixtures, geometry, String(setupId));
	if (engineSetup) {
		try {
			planes = clearancePlanes(engineSetup);
			tallest = tallestObstacle(engineSetup);
		} catch (e) {
			if (!isOffsetInputError(e)) throw e;
			problems.push(...e.issues.map((i) => `${i.field} ${i.message}`));
		}
	}
	for (const f of fixtures) f.clearance = planes[f.register] ?? null;

	const toolRows = await trx('setup_tools as st')
		.join('tools as t', 't.id', 'st.tool_id')
		.where('st.setup_id', setupId)
		.orderBy('t.t_number')
		.select('t.id', 't.t_number', 't.h_number', 't.description', 't.holder');
	const tools: SetupTool[] = toolRows.map((r) => {
		const o = byRegister.get(`tool:${r.h_number}`);
		return {
			toolId: Number(r.id),
			t: r.t_number,
			h: r.h_number,
			description: r.description,
			holder: r.holder,
			offset: o?.value ?? null,
			measuredAt: o?.measuredAt ?? null,
			gate: gated(gate, 'tools', String(r.h_number))
		};
	});

	const opRows = await trx('setup_ops as o')
		.leftJoin('fixtures as f', 'f.id', 'o.fixture_id')
		.where('o.setup_id', setupId)
		.orderBy('o.sequence')
		.select('o.sequence', 'o.name', 'o.fixture_id', 'o.notes', 'f.register');
	const ops: SetupOp[] = opRows.map((r) => ({
		sequence: r.sequence,
		name: r.name,
		fixtureId: r.fixture_id === null ? null : Number(r.fixture_id),
		register: r.register ?? null,
		notes: r.notes
	}));

	const photoRows = await trx('setup_photos as p')
		.leftJoin('public.users as u', 'u.id', 'p.uploaded_by')
		.where('p.setup_id', setupId)
		.orderBy('p.id')
		.select('p.*', 'u.name as uploaded_by_name');
	const photos: SetupPhoto[] = photoRows.map((r) => ({
		id: Number(r.id),
		caption: r.caption,
		originalName: r.original_name,
		contentType: r.content_type,
		byteSize: r.byte_size,
		uploadedAt: iso(r.uploaded_at),
		uploadedByName: r.uploaded_by_name ?? null
	}));

	const historyRows = await trx('setup_status_changes as c')
		.leftJoin('public.users as u', 'u.id', 'c.changed_by')
		.where('c.setup_id', setupId)
		.orderBy([{ column: 'c.changed_at' }, { column: 'c.id' }])
		.select('c.*', 'u.name as by_name');
	const history: StatusChange[] = historyRows.map((r) => ({
		from: r.from_status ?? null,
		to: r.to_status,
		at: iso(r.changed_at),
		byName: r.by_name ?? null,
		note: r.note
	}));

	return {
		id: Number(s.id),
		name: s.name,
		job: s.job,
		status: s.status,
		clearanceMargin: margin,
		createdAt: iso(s.created_at),
		createdByName: s.created_by_name ?? null,
		machine,
		reference,
		fixtures,
		tools,
		ops,
		photos,
		history,
		geometry,
		clearance: { planes, tallest, problems }
	};
}

/** The part of the machine's current table this setup uses, and registers never measured. */
export function setupTable(detail: Pick<SetupDetail, 'machine' | 'fixtures' | 'tools'>): {
	table: OffsetTable;
	missing: string[];
} {
	const m = detail.machine;
	const table: OffsetTable = { convention: m.convention, units: m.units, work: {}, tools: {} };
	const missing: string[] = [];
	for (const f of detail.fixtures) {
		if (f.workOffset === null) missing.push(f.register);
		else table.work[f.register] = f.workOffset;
	}
	for (const t of detail.tools) {
		if (t.offset === null) missing.push(`H${t.h} (T${t.t})`);
		else table.tools[String(t.h)] = t.offset;
	}
	if (m.convention === 'master-tool' && m.masterToolH) table.masterTool = String(m.masterToolH);
	return { table, missing };
}
