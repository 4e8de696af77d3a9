/** Reading past read-backs (newest first) and the values of one. `trx` is a shop transaction. */
import type { Knex } from 'knex';
import { iso } from '../db/convert';
import type { FixtureRow, ReadbackValueRow, ToolRow } from '../db/tables';

export interface ReadbackSummary {
	id: number;
	takenAt: string;
	source: 'file' | 'typed';
	fileName: string;
	takenBy: string | null;
	setupId: number | null;
	equal: number;
	different: number;
	note: string;
}

export interface ReadbackValueLine {
	/** Z/length ('work', 'tool'), noted length wear, other registers, or a component (issue 20). */
	kind: 'work' | 'tool' | 'wear' | 'other' | 'x' | 'y' | 'radius' | 'length-wear' | 'radius-wear';
	register: string;
	value: number | null;
	expected: number | null;
	status: 'equal' | 'different' | 'only-control' | 'only-datumkeep' | 'noted';
	causes: { kind: string; text: string }[];
	noPointText: string | null;
}

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));

export async function listReadbacks(
	trx: Knex.Transaction,
	machineId: number,
	limit = 20
): Promise<ReadbackSummary[]> {
	const rows = await trx('readbacks as r')
		.leftJoin('public.users as u', 'u.id', 'r.taken_by')
		.where('r.machine_id', machineId)
		.orderBy([
			{ column: 'r.taken_at', order: 'desc' },
			{ column: 'r.id', order: 'desc' }
		])
		.limit(limit)
		.select('r.*', 'u.name as taken_by_name');
	return rows.map((r) => ({
		id: Number(r.id),
		takenAt: iso(r.taken_at),
		source: r.source,
		fileName: r.file_name,
		takenBy: r.taken_by_name ?? null,
		setupId: num(r.setup_id),
		equal: r.equal_count,
		different: r.different_count,
		note: r.note
	}));
}

export async function readbackValues(
	trx: Knex.Transaction,
	readbackId: number
): Promise<ReadbackValueLine[]> {
	const rows = await trx<ReadbackValueRow>('readback_values')
		.where({ readback_id: readbackId })
		.orderBy('id');
	return rows.map((r) => ({
		kind: r.register_kind as ReadbackValueLine['kind'],
		register: r.register,
		value: num(r.value),
		expected: num(r.expected),
		status: r.status as ReadbackValueLine['status'],
		causes: typeof r.causes === 'string' ? JSON.parse(r.causes) : r.causes,
		noPointText: r.no_point_text
	}));
}

/** Whether read-back `id` was taken on this machine (the URL may name another machine's). */
export async function isMachineReadback(
	trx: Knex.Transaction,
	machineId: number,
	id: number
): Promise<boolean> {
	return !!(await trx('readbacks').where({ id, machine_id: machineId }).first('id'));
}

/**
 * What each register is called on this machine, for the read-back grid: work offsets by their
 * active fixture's name, H numbers by their tool ("T3 10 mm end mill"), archived tools included.
 */
export async function registerNames(
	trx: Knex.Transaction,
	machineId: number
): Promise<{ work: Map<string, string>; tool: Map<string, string> }> {
	const fixtures: Pick<FixtureRow, 'register' | 'name'>[] = await trx('fixtures')
		.where({ machine_id: machineId })
		.whereNull('archived_at')
		.select('register', 'name');
	const tools: Pick<ToolRow, 'h_number' | 't_number' | 'description'>[] = await trx('tools')
		.where({ machine_id: machineId })
		.select('h_number', 't_number', 'description');
	return {
		work: new Map(fixtures.map((f) => [f.register, f.name])),
		tool: new Map(tools.map((t) => [String(t.h_number), `T${t.t_number} ${t.description}`]))
	};
}
