/**
 * The shop's tool library: assemblies and their append-only presetter measurements (the CSV
 * mapping and presetter imports are in presetter-import.ts). `trx` is always a shop transaction.
 */
import type { Knex } from 'knex';
import type { AssemblyForm, MeasurementForm } from '$lib/schemas/tool-library';
import type { Units } from '$lib/offsets';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { iso } from '../db/convert';
import { isUniqueViolation } from '../db/errors';
import { wallTimeToDate } from './wall-time';

export interface Measurement {
	id: number;
	gaugeLength: number;
	radius: number | null;
	units: Units;
	presetter: string;
	measuredAt: string;
	source: 'typed' | 'csv';
	importId: number | null;
	note: string;
	recordedBy: string | null;
	recordedAt: string;
}

export interface Assembly {
	id: number;
	name: string;
	holder: string;
	cutter: string;
	stickOut: number | null;
	units: Units;
	createdAt: string;
	/** The newest measurement (by measured time): the assembly's length now. */
	latest: Measurement | null;
	measurementCount: number;
	/**
	 * Where it is now ("Mill 1 T11"): its assignment not ended by a later one (./placement.ts),
	 * while that tool is in the rack. One place, or none.
	 */
	places: string[];
}

export interface Assignment {
	id: number;
	machineId: number;
	machineName: string;
	t: number;
	h: number;
	measurementId: number;
	readingId: number;
	value: number | null;
	units: Units;
	by: string | null;
	at: string;
	/** When it left that pocket (moved to another, or the pocket got another assembly); null: there now. */
	endedAt: string | null;
	endReason: 'moved' | 'replaced' | null;
	/** The tool of that pocket was archived (the assembly is no longer there either). */
	toolArchived: boolean;
}

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));

function toMeasurement(r: Record<string, unknown>): Measurement {
	return {
		id: Number(r.id),
		gaugeLength: Number(r.gauge_length),
		radius: num(r.radius),
		units: r.units as Units,
		presetter: String(r.presetter ?? ''),
		measuredAt: iso(r.measured_at),
		source: r.source as 'typed' | 'csv',
		importId: num(r.import_id),
		note: String(r.note ?? ''),
		recordedBy: (r.recorded_by_name as string) ?? null,
		recordedAt: iso(r.recorded_at)
	};
}

/** Newest first: by when it was measured, then by when it was recorded. */
const NEWEST = [
	{ column: 'm.measured_at', order: 'desc' as const },
	{ column: 'm.id', order: 'desc' as const }
];

/** Every assembly with its newest measurement, by name. */
export async function listAssemblies(trx: Knex.Transaction): Promise<Assembly[]> {
	const rows = await trx('tool_assemblies as a')
		.select(
			'a.*',
			trx.raw('(select count(*) from assembly_measurements c where c.assembly_id = a.id) as n')
		)
		.orderByRaw('lower(a.name)');
	const latest = await trx.select('m.*').from(
		trx('assembly_measurements as m')
			.distinctOn('m.assembly_id')
			.select('m.*')
			.orderBy([{ column: 'm.assembly_id' }, ...NEWEST])
			.as('m')
	);
	const byAssembly = new Map(latest.map((m) => [Number(m.assembly_id), toMeasurement(m)]));
	const placed = await trx('assembly_assignments as s')
		.join('machines as mc', 'mc.id', 's.machine_id')
		.join('tools as t', 't.id', 's.tool_id')
		.whereNull('t.archived_at')
		.whereNull('mc.archived_at')
		.whereNotExists((q) =>
			q.select(1).from('assembly_assignment_ends as e').whereRaw('e.assignment_id = s.id')
		)
		.orderBy([{ column: 's.assembly_id' }, { column: 's.assigned_at', order: 'desc' }])
		.select('s.assembly_id', 'mc.name', 't.t_number');
	const places = new Map<number, string[]>();
	for (const p of placed) {
		const list = places.get(Number(p.assembly_id)) ?? [];
		list.push(`${p.name} T${p.t_number}`);
		places.set(Number(p.assembly_id), list);
	}
	return rows.map((a) => ({
		id: Number(a.id),
		name: a.name,
		holder: a.holder,
		cutter: a.cutter,
		stickOut: num(a.stick_out),
		units: a.units,
		createdAt: iso(a.created_at),
		latest: byAssembly.get(Number(a.id)) ?? null,
		measurementCount: Number(a.n),
		places: places.get(Number(a.id)) ?? []
	}));
}

export async function getAssembly(
	trx: Knex.Transaction,
	id: number
): Promise<(Assembly & { measurements: Measurement[]; assignments: Assignment[] }) | undefined> {
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const a = await trx('tool_assemblies').where({ id }).first();
	if (!a) return undefined;
	const measurements = (
		await trx('assembly_measurements as m')
			.leftJoin('public.users as u', 'u.id', 'm.recorded_by')
			.where('m.assembly_id', id)
			.orderBy(NEWEST)
			.select('m.*', 'u.name as recorded_by_name')
	).map(toMeasurement);
	const assignments = await trx('assembly_assignments as s')
		.join('machines as mc', 'mc.id', 's.machine_id')
		.join('tools as t', 't.id', 's.tool_id')
		.leftJoin('offset_versions as o', 'o.reading_id', 's.reading_id')
		.leftJoin('assembly_assignment_ends as e', 'e.assignment_id', 's.id')
		.leftJoin('public.users as u', 'u.id', 's.assigned_by')
		.where('s.assembly_id', id)
		.orderBy([
			{ column: 's.assigned_at', order: 'desc' },
			{ column: 's.id', order: 'desc' }
		])
		.select(
			's.id',
			's.machine_id',
			'mc.name as machine_name',
			'mc.units',
			't.t_number',
			't.h_number',
			's.measurement_id',
			's.reading_id',
			'o.value',
			'u.name as by_name',
			's.assigned_at',
			'e.ended_at',
			'e.reason as end_reason',
			't.archived_at as tool_archived_at',
			'mc.archived_at as machine_archived_at'
		);
	return {
		id: Number(a.id),
		name: a.name,
		holder: a.holder,
		cutter: a.cutter,
		stickOut: num(a.stick_out),
		units: a.units,
		createdAt: iso(a.created_at),
		latest: measurements[0] ?? null,
		measurementCount: measurements.length,
		// Where it is now: the assignment not ended, while its tool and machine are in use.
		places: assignments
			.filter((s) => !s.ended_at && !s.tool_archived_at && !s.machine_archived_at)
			.map((s) => `${s.machine_name} T${s.t_number}`),
		measurements,
		assignments: assignments.map((s) => ({
			id: Number(s.id),
			machineId: Number(s.machine_id),
			machineName: s.machine_name,
			t: Number(s.t_number),
			h: Number(s.h_number),
			measurementId: Number(s.measurement_id),
			readingId: Number(s.reading_id),
			value: num(s.value),
			units: s.units,
			by: s.by_name ?? null,
			at: iso(s.assigned_at),
			endedAt: s.ended_at ? iso(s.ended_at) : null,
			endReason: s.end_reason ?? null,
			toolArchived: !!s.tool_archived_at
		}))
	};
}

export type LibraryResult<T = object> =
	({ ok: true } & T) | { ok: false; field?: string; message: string };

function measuredAtOf(text: string, timeZone: string, now: Date): LibraryResult<{ at: Date }> {
	if (!text) return { ok: true, at: now };
	const at = wallTimeToDate(text, timeZone);
	if (!at)
		return { ok: false, field: 'measuredAt', message: `Measured at "${text}" is not a real date.` };
	if (at.getTime() > now.getTime() + 5 * 60_000)
		return { ok: false, field: 'measuredAt', message: `Measured at "${text}" is in the future.` };
	return { ok: true, at };
}

export const measurementRow = (
	assemblyId: number,
	m: Pick<MeasurementForm, 'gaugeLength' | 'radius' | 'units' | 'presetter' | 'note'>,
	at: Date,
	by: Actor,
	source: 'typed' | 'csv',
	importId: number | null = null
) => ({
	assembly_id: assemblyId,
	gauge_length: m.gaugeLength,
	radius: m.radius ?? null,
	units: m.units,
	presetter: m.presetter,
	measured_at: at,
	source,
	import_id: importId,
	note: m.note,
	recorded_by: by.id
});

/** A new assembly with its first measurement. */
export async function addAssembly(
	trx: Knex.Transaction,
	form: AssemblyForm,
	by: Actor,
	timeZone: string,
	now = new Date()
): Promise<LibraryResult<{ id: number }>> {
	const when = measuredAtOf(form.measuredAt, timeZone, now);
	if (!when.ok) return when;
	let id: number;
	try {
		const [a] = await trx.transaction((sp) =>
			sp('tool_assemblies')
				.insert({
					name: form.name,
					holder: form.holder,
					cutter: form.cutter,
					stick_out: form.stickOut ?? null,
					units: form.units,
					created_by: by.id
				})
				.returning('id')
		);
		id = Number(a.id);
	} catch (e) {
		if (!isUniqueViolation(e, 'tool_assemblies_name_key')) throw e;
		return {
			ok: false,
			field: 'name',
			message: `An assembly named "${form.name}" is already in the library: open it and add a re-measure.`
		};
	}
	await trx('assembly_measurements').insert(measurementRow(id, form, when.at, by, 'typed'));
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		ip: by.ip,
		action: 'assembly.added',
		target: form.name,
		detail: { gaugeLength: form.gaugeLength, radius: form.radius ?? null, units: form.units }
	});
	return { ok: true, id };
}

/** A re-measure: a new row; the earlier ones stay as they were. */
export async function addMeasurement(
	trx: Knex.Transaction,
	assemblyId: number,
	form: MeasurementForm,
	by: Actor,
	timeZone: string,
	now = new Date()
): Promise<LibraryResult<{ id: number }>> {
	const a = await trx('tool_assemblies').where({ id: assemblyId }).first('name');
	if (!a) return { ok: false, message: 'That assembly is not in this shop’s library.' };
	const when = measuredAtOf(form.measuredAt, timeZone, now);
	if (!when.ok) return when;
	const [m] = await trx('assembly_measurements')
		.insert(measurementRow(assemblyId, form, when.at, by, 'typed'))
		.returning('id');
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		ip: by.ip,
		action: 'assembly.measured',
		target: a.name,
		detail: { gaugeLength: form.gaugeLength, radius: form.radius ?? null, units: form.units }
	});
	return { ok: true, id: Number(m.id) };
}
