/**
 * Reading the record back: every version of one offset (history table and drift chart) and a
 * machine's recent readings (the live list). Both come out in one row shape so the pages and
 * the JSON API share it.
 */
import type { Knex } from 'knex';
import { canonicalH, canonicalRegister } from '$lib/offsets';
import type { MachineRecord } from '../offsets/machine-state';

export interface RecordRow {
	/** The offset version (null for a reading that set no offset, e.g. a reference check touch). */
	offsetVersionId: number | null;
	readingId: number | null;
	readingKind: 'tool-touch' | 'part-top' | 'reference' | 'tool-remeasure' | null;
	registerKind: 'tool' | 'work' | null;
	register: string | null;
	value: number | null;
	units: 'inch' | 'mm';
	convention: string;
	machineZ: number | null;
	blockHeight: number | null;
	instrument: string;
	/** T number of the tool that touched (tool readings and part-top touches). */
	toolT: number | null;
	fixtureRegister: string | null;
	changed: boolean;
	reason: string;
	correctsReadingId: number | null;
	correctedByReadingId: number | null;
	referenceVersion: number;
	by: string | null;
	/** When the server recorded it. */
	at: string;
	/** When the operator measured, by the device's clock, for a reading queued offline (else null). */
	measuredAt: string | null;
}

const n = (v: unknown) => (v === null || v === undefined ? null : Number(v));

function toRow(r: Record<string, unknown>, machine: MachineRecord): RecordRow {
	return {
		offsetVersionId: n(r.offset_version_id),
		readingId: n(r.reading_id),
		readingKind: (r.reading_kind as RecordRow['readingKind']) ?? null,
		registerKind: (r.register_kind as RecordRow['registerKind']) ?? null,
		register: (r.register as string) ?? null,
		value: n(r.value),
		units: (r.units as 'inch' | 'mm') ?? machine.units,
		convention: (r.convention as string) ?? machine.convention,
		machineZ: n(r.machine_z),
		blockHeight: n(r.block_height),
		instrument: (r.instrument as string) ?? '',
		toolT: n(r.tool_t),
		fixtureRegister: (r.fixture_register as string) ?? null,
		changed: r.tool_changed === true,
		reason: (r.reason as string) ?? '',
		correctsReadingId: n(r.corrects_reading_id),
		correctedByReadingId: n(r.corrected_by),
		referenceVersion: Number(r.reference_version),
		by: (r.by_name as string) ?? null,
		at: new Date(r.at as string).toISOString(),
		measuredAt: r.measured_at ? new Date(r.measured_at as string).toISOString() : null
	};
}

const READING_COLUMNS = [
	'r.id as reading_id',
	'r.kind as reading_kind',
	'r.machine_z',
	'r.block_height',
	'r.instrument',
	'r.tool_changed',
	'r.reason',
	'r.corrects_reading_id',
	'r.measured_at',
	't.t_number as tool_t',
	'f.register as fixture_register'
];

/** A register from the URL in canonical form, or null: "2"/"H2" for tools, "G54" for work. */
export function registerFromParam(kind: string, param: string): string | null {
	if (kind === 'tool') return canonicalH(param);
	if (kind === 'work') return canonicalRegister(param);
	return null;
}

/** Every version of one offset, oldest first (for the chart; the table reverses it). */
export async function registerHistory(
	trx: Knex.Transaction,
	machine: MachineRecord,
	kind: 'tool' | 'work',
	register: string
): Promise<RecordRow[]> {
	const rows = await trx('offset_versions as o')
		.leftJoin('readings as r', 'r.id', 'o.reading_id')
		.leftJoin('tools as t', 't.id', 'r.tool_id')
		.leftJoin('fixtures as f', 'f.id', 'r.fixture_id')
		.leftJoin('public.users as u', 'u.id', trx.raw('coalesce(r.taken_by, o.created_by)'))
		.where({ 'o.machine_id': machine.id, 'o.register_kind': kind, 'o.register': register })
		.orderBy([{ column: 'o.created_at' }, { column: 'o.id' }])
		.select(
			'o.id as offset_version_id',
			'o.register_kind',
			'o.register',
			'o.value',
			'o.units',
			'o.convention',
			'o.reference_version',
			'o.created_at as at',
			'u.name as by_name',
			trx.raw(
				'(select min(c.id) from readings c where c.corrects_reading_id = r.id) as corrected_by'
			),
			...READING_COLUMNS
		);
	return rows.map((r) => toRow(r, machine));
}

/** The machine's newest readings (with the offset each set), newest first. */
export async function recentReadings(
	trx: Knex.Transaction,
	machine: MachineRecord,
	limit = 20
): Promise<RecordRow[]> {
	const rows = await trx('readings as r')
		.leftJoin('offset_versions as o', 'o.reading_id', 'r.id')
		.leftJoin('tools as t', 't.id', 'r.tool_id')
		.leftJoin('fixtures as f', 'f.id', 'r.fixture_id')
		.leftJoin('public.users as u', 'u.id', 'r.taken_by')
		.where('r.machine_id', machine.id)
		.orderBy([
			{ column: 'r.taken_at', order: 'desc' },
			{ column: 'r.id', order: 'desc' }
		])
		.limit(Math.min(Math.max(limit, 1), 200))
		.select(
			'o.id as offset_version_id',
			'o.register_kind',
			'o.register',
			'o.value',
			'o.units',
			'o.convention',
			'r.reference_version',
			'r.taken_at as at',
			'u.name as by_name',
			trx.raw(
				'(select min(c.id) from readings c where c.corrects_reading_id = r.id) as corrected_by'
			),
			...READING_COLUMNS
		);
	return rows.map((r) => toRow(r, machine));
}
