import type { Knex } from 'knex';
import type { CheckProgress, LastCheck } from '$lib/fleet';
import { iso, isoOrNull } from '../db/convert';
import type { CheckRunRow } from '../db/tables';

/** The shop's background checks as the checks API lists them. `trx` is a shop transaction. */
export type CheckRunSummary = Omit<LastCheck, 'machines'>;

/** The shop's most recent checks, newest first. */
export async function recentCheckRuns(
	trx: Knex.Transaction,
	limit = 10
): Promise<CheckRunSummary[]> {
	const rows: CheckRunRow[] = await trx('check_runs')
		.orderBy('started_at', 'desc')
		.limit(limit)
		.select('*');
	return rows.map((r) => ({
		jobId: r.job_id,
		trigger: r.trigger as LastCheck['trigger'],
		status: r.status as LastCheck['status'],
		checkedAt: iso(r.checked_at),
		finishedAt: isoOrNull(r.finished_at),
		opened: r.opened,
		stillOpen: r.still_open,
		resolved: r.resolved
	}));
}

/**
 * The shop's own record of one check job, or undefined while the worker has not started it.
 * Read from the shop's schema, so one shop can never follow another's jobs.
 */
export async function findCheckRun(
	trx: Knex.Transaction,
	jobId: string
): Promise<CheckRunRow | undefined> {
	return trx('check_runs').where({ job_id: jobId }).first();
}

/**
 * A "Check now" job as the page follows it: from its check_runs row, with the queue's live
 * progress (`progress`, asked for only while the row says running) when the queue has it.
 */
export function checkProgressOf(
	jobId: string,
	row: CheckRunRow | undefined,
	progress: { done: number; total: number } | null
): CheckProgress {
	const state = (!row ? 'waiting' : row.status) as CheckProgress['state'];
	const done = row?.status === 'done';
	return {
		jobId,
		state,
		machinesDone: progress?.done ?? (done ? row.machines : 0),
		machinesTotal: progress?.total ?? (done ? row.machines : null),
		opened: row?.opened ?? 0,
		stillOpen: row?.still_open ?? 0,
		resolved: row?.resolved ?? 0,
		error: row?.error ?? ''
	};
}
