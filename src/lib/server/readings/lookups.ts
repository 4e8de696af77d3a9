/**
 * The rows a reading refers to, looked up on the machine it is taken on: its tool or fixture,
 * the reading it corrects (with the correction rules) and the last machine Z of the same touch.
 * `trx` is always a shop transaction (withShop).
 */
import type { Knex } from 'knex';
import type { ReadingIssue } from './input';

/** The tool a reading is taken with, as the readings need it (not a whole `tools` row). */
export interface ToolRef {
	id: number;
	t: number;
	h: number;
	description: string;
}

/** A tool of this machine (not archived), or undefined. */
export async function findTool(
	trx: Knex.Transaction,
	machineId: number,
	toolId: number | string
): Promise<ToolRef | undefined> {
	const id = Number(toolId);
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const r = await trx('tools')
		.where({ id, machine_id: machineId })
		.whereNull('archived_at')
		.first();
	return r
		? { id: Number(r.id), t: r.t_number, h: r.h_number, description: r.description }
		: undefined;
}

/** The fixture a part-top reading is for. */
export interface FixtureRef {
	id: number;
	register: string;
	name: string;
}

/** A fixture of this machine (not archived), or undefined. */
export async function findFixture(
	trx: Knex.Transaction,
	machineId: number,
	fixtureId: number | string
): Promise<FixtureRef | undefined> {
	const id = Number(fixtureId);
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const r = await trx('fixtures')
		.where({ id, machine_id: machineId })
		.whereNull('archived_at')
		.first();
	return r ? { id: Number(r.id), register: r.register, name: r.name } : undefined;
}

/**
 * Correction rules: the corrected reading exists on this machine, measured the same thing,
 * has not been corrected already (correct the newest one instead), and a reason is given.
 */
export async function checkCorrection(
	trx: Knex.Transaction,
	machineId: number,
	raw: string,
	reason: string,
	same: { toolId?: number; fixtureId?: number },
	issues: ReadingIssue[]
): Promise<number | null> {
	if (!raw) return null;
	const id = Number(raw);
	const old = Number.isSafeInteger(id)
		? await trx('readings').where({ id, machine_id: machineId }).first()
		: undefined;
	if (!old) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${raw} is not a reading on this machine: nothing to correct.`
		});
		return null;
	}
	const matches =
		same.fixtureId !== undefined
			? old.kind === 'part-top' && Number(old.fixture_id) === same.fixtureId
			: old.kind !== 'part-top' && Number(old.tool_id) === same.toolId;
	if (!matches) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${id} measured something else; a correction must measure the same ${same.fixtureId !== undefined ? 'fixture' : 'tool'}.`
		});
	}
	// Only the reading behind the current value: an older one is history, re-measure instead.
	const newest = await trx('readings')
		.where({ machine_id: machineId })
		.modify((q) =>
			same.fixtureId !== undefined
				? q.where({ kind: 'part-top', fixture_id: same.fixtureId })
				: q.where({ tool_id: same.toolId }).whereIn('kind', ['tool-touch', 'tool-remeasure'])
		)
		.orderBy([
			{ column: 'taken_at', order: 'desc' },
			{ column: 'id', order: 'desc' }
		])
		.first('id');
	const later = await trx('readings').where({ corrects_reading_id: id }).first('id');
	if (matches && !later && newest && Number(newest.id) !== id) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${id} is not the newest of this ${same.fixtureId !== undefined ? 'fixture' : 'tool'} (that is #${newest.id}): only the reading behind the current value can be corrected. Take a new reading instead.`
		});
	}
	if (later) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${id} was already corrected by reading #${later.id}; correct that one instead.`
		});
	}
	if (!reason) {
		issues.push({ field: 'reason', message: 'Say what was wrong with the reading you correct.' });
	}
	return id;
}

/** The machine Z of the newest uncorrected reading of a tool or fixture (same kind of touch). */
export async function previousMachineZ(
	trx: Knex.Transaction,
	machineId: number,
	where: { toolId?: number; fixtureId?: number },
	excludeReadingId: number | null
): Promise<number | null> {
	const r = await trx('readings as r')
		.where('r.machine_id', machineId)
		.modify((q) =>
			where.fixtureId !== undefined
				? q.where({ 'r.kind': 'part-top', 'r.fixture_id': where.fixtureId })
				: q.where('r.tool_id', where.toolId!).whereIn('r.kind', ['tool-touch', 'tool-remeasure'])
		)
		.whereRaw('not exists (select 1 from readings c where c.corrects_reading_id = r.id)')
		.whereRaw('cardinality(r.overridden_findings) = 0')
		.modify((q) => {
			if (excludeReadingId) q.whereNot('r.id', excludeReadingId);
		})
		.orderBy([
			{ column: 'r.taken_at', order: 'desc' },
			{ column: 'r.id', order: 'desc' }
		])
		.first('r.machine_z');
	return r ? Number(r.machine_z) : null;
}
