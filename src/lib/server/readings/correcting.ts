/**
 * What the reading pages load besides the form: the reading being corrected when the page was
 * opened from a history row (`?corrects=<id>`), and the tool that touched a part top last.
 * `trx` is always a shop transaction (withShop).
 */
import type { Knex } from 'knex';

/** The reading a correction replaces, as the page's note shows it. */
export interface CorrectedReading {
	id: number;
	machineZ: number;
	blockHeight: number;
	at: string;
	by: string | null;
	/** The tool that touched (for a part top, the form's default tool). */
	toolId: number | null;
}

/**
 * The reading `raw` names when it is a reading of this tool (any touch on it but a part top)
 * or of this fixture's part top on this machine; null otherwise (the page then records a new
 * reading, and the save checks the correction rules again).
 */
export async function correctingReading(
	trx: Knex.Transaction,
	machineId: number,
	of: { toolId: number } | { fixtureId: number },
	raw: string | null
): Promise<CorrectedReading | null> {
	if (!raw || !/^\d{1,18}$/.test(raw)) return null;
	const r = await trx('readings as r')
		.leftJoin('public.users as u', 'u.id', 'r.taken_by')
		.where({ 'r.id': Number(raw), 'r.machine_id': machineId })
		.modify((q) =>
			'fixtureId' in of
				? q.where({ 'r.fixture_id': of.fixtureId, 'r.kind': 'part-top' })
				: q.where({ 'r.tool_id': of.toolId }).whereNot('r.kind', 'part-top')
		)
		.first('r.id', 'r.machine_z', 'r.block_height', 'r.taken_at', 'r.tool_id', 'u.name as by');
	return r
		? {
				id: Number(r.id),
				machineZ: Number(r.machine_z),
				blockHeight: Number(r.block_height),
				at: new Date(r.taken_at).toISOString(),
				by: (r.by as string | null) ?? null,
				toolId: r.tool_id === null ? null : Number(r.tool_id)
			}
		: null;
}

/** The tool of the fixture's newest part-top reading (the part-top form's default tool). */
export async function lastPartTopToolId(
	trx: Knex.Transaction,
	machineId: number,
	fixtureId: number
): Promise<number | null> {
	const last = await trx('readings')
		.where({ machine_id: machineId, fixture_id: fixtureId, kind: 'part-top' })
		.orderBy([
			{ column: 'taken_at', order: 'desc' },
			{ column: 'id', order: 'desc' }
		])
		.first('tool_id');
	return last?.tool_id == null ? null : Number(last.tool_id);
}
