/** Reading past read-backs (newest first) and the values of one. `trx` is a shop transaction. */
import type { Knex } from 'knex';

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

export interface ReadbackValueRow {
	kind: 'work' | 'tool' | 'wear' | 'other';
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
		takenAt: new Date(r.taken_at).toISOString(),
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
): Promise<ReadbackValueRow[]> {
	const rows = await trx('readback_values').where({ readback_id: readbackId }).orderBy('id');
	return rows.map((r) => ({
		kind: r.register_kind,
		register: r.register,
		value: num(r.value),
		expected: num(r.expected),
		status: r.status,
		causes: typeof r.causes === 'string' ? JSON.parse(r.causes) : r.causes,
		noPointText: r.no_point_text
	}));
}
