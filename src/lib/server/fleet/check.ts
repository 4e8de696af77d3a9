import type { Knex } from 'knex';
import type { Finding } from '$lib/offsets';
import { db } from '../db';
import { withShop } from '../db/tenant';
import { toMachineRecord } from '../offsets/machine-state';
import type { ShopInfo } from '../shops/queries';
import { readbackHours } from '../readbacks/findings';
import { findingsOfMachines, storeFindingsMany } from './check-batch';
import { findingRowKey, findingRows, subjectLabel, upsertFindingRows } from './finding-rows';

export { findingRowKey, subjectLabel };

/**
 * The background offset check of one shop (nightly, or "Check now"): the engine's `checkOffsets` (through
 * machineState) over every active machine, stored as findings.
 *
 * Idempotent by construction:
 * - a finding's row is named by `m<machine id>|<engine key>` (kind + subject), so the same
 *   problem found again updates its row (last_seen_at, message) and keeps its status;
 * - the instant the offsets are judged at (`checked_at`) is fixed by the job's first attempt
 *   and kept in check_runs, so a retried job computes exactly the same findings and writes the
 *   same values again;
 * - a problem no longer found is resolved automatically (resolved_by null) — but only when it
 *   was last seen before this check, so an older job retried late cannot undo a newer one;
 * - a problem found again after it was resolved (by hand or by a check) is a new row linked to
 *   the resolved one, if the check looked after the resolution.
 * Writes that change a machine's offsets re-run its checks at once (./recheck.ts, machine by
 * machine through machineState and storeFindings; the same findings as here).
 * Each batch of CHECK_BATCH machines is its own transaction: a crash half-way leaves whole
 * batches done, and the retry does them again to the same result.
 */
/** Machines per transaction of the shop check (a 50-machine shop is one). */
export const CHECK_BATCH = 100;

export interface CheckRun {
	jobId: string;
	trigger: 'nightly' | 'manual';
	/** The instant to judge at on the first attempt (default now). */
	now?: Date;
	onProgress?: (done: number, total: number) => Promise<void> | void;
}

export interface CheckSummary {
	checkedAt: string;
	machines: number;
	opened: number;
	stillOpen: number;
	resolved: number;
}

export async function runShopCheck(
	shop: ShopInfo,
	run: CheckRun,
	knex: Knex = db()
): Promise<CheckSummary> {
	const { checkedAt, machines } = await withShop(
		shop,
		async (trx) => {
			await trx('check_runs')
				.insert({
					job_id: run.jobId,
					trigger: run.trigger,
					checked_at: run.now ?? new Date()
				})
				.onConflict('job_id')
				.ignore();
			// A retry: the same row, running again, judged at the first attempt's instant.
			const [row] = await trx('check_runs')
				.where({ job_id: run.jobId })
				.update({ status: 'running', error: '', finished_at: null })
				.returning('checked_at');
			const list = await trx('machines').whereNull('archived_at').orderBy('id');
			return { checkedAt: new Date(row.checked_at), machines: list.map(toMachineRecord) };
		},
		knex
	);

	const summary: CheckSummary = {
		checkedAt: checkedAt.toISOString(),
		machines: machines.length,
		opened: 0,
		stillOpen: 0,
		resolved: 0
	};
	const stamp = localStamp(checkedAt, shop.timeZone);
	const note = { comment: `no longer found by the check at ${stamp}` };
	const finish = (trx: Knex.Transaction) =>
		trx('check_runs')
			.where({ job_id: run.jobId })
			.update({
				status: 'done',
				// The clock, not now(): now() is when this (last batch's) transaction began.
				finished_at: trx.raw('clock_timestamp()'),
				machines: summary.machines,
				opened: summary.opened,
				still_open: summary.stillOpen,
				resolved: summary.resolved
			});
	let done = 0;
	// Set-based (./check-batch.ts): a batch of machines read in a dozen statements, judged in
	// memory, stored with one upsert and one resolve, in one transaction — the last batch's
	// also marks the run done, so the findings and "done" commit together.
	for (let i = 0; i < machines.length; i += CHECK_BATCH) {
		const batch = machines.slice(i, i + CHECK_BATCH);
		const last = i + CHECK_BATCH >= machines.length;
		await withShop(
			shop,
			async (trx) => {
				const hours = await readbackHours(trx, shop.id);
				const r = await storeFindingsMany(
					trx,
					await findingsOfMachines(trx, batch, checkedAt, hours),
					checkedAt,
					note
				);
				summary.opened += r.opened;
				summary.stillOpen += r.stillOpen;
				summary.resolved += r.resolved;
				if (last) await finish(trx);
			},
			knex
		);
		done += batch.length;
		await run.onProgress?.(done, machines.length);
	}
	if (machines.length === 0) await withShop(shop, finish, knex);
	return summary;
}

/** Marks the run failed (the job will be retried or has given up). */
export async function markCheckFailed(
	shop: ShopInfo,
	jobId: string,
	message: string,
	knex: Knex = db()
): Promise<void> {
	await withShop(
		shop,
		(trx) =>
			trx('check_runs')
				.where({ job_id: jobId })
				.update({ status: 'failed', error: message.slice(0, 500), finished_at: trx.fn.now() }),
		knex
	);
}

/** How findings no longer found get resolved: by a check, or by a write in a request. */
export interface ResolveNote {
	/** "no longer found by the check at …" or "resolved by the new reading of H3 at 10:41". */
	comment: string;
	/** The member whose write fixed it (null for a background check). */
	by?: number | null;
}

/**
 * Stores one machine's findings as of `checkedAt`: the same problem still found updates its
 * live row; a problem found again after it was resolved is a new row (its own first-found time)
 * linked to the resolved one; a live problem no longer found is resolved with `note`.
 * Overrides are not the engine's to resolve (a new reading of the register resolves them).
 */
export async function storeFindings(
	trx: Knex.Transaction,
	machineId: number,
	findings: Finding[],
	checkedAt: Date,
	note: ResolveNote,
	setupNames: Map<string, string>,
	/** Only these kinds are resolved when no longer found (a read-back sees only its own). */
	onlyKinds?: readonly string[]
): Promise<{ opened: number; stillOpen: number; resolved: number }> {
	// The engine may name one problem twice (e.g. two setups sharing a pair): one row per key.
	const rows = findingRows([{ machineId, findings, setupNames }]);
	const { opened, stillOpen } = await upsertFindingRows(trx, rows, checkedAt);
	const found = [...rows.keys()];
	const resolved = await trx('findings')
		.where({ machine_id: machineId })
		.whereNot('status', 'resolved')
		.whereNot('kind', 'override')
		.where('last_seen_at', '<', checkedAt)
		.modify((q) => {
			if (found.length > 0) q.whereNotIn('key', found);
			if (onlyKinds) q.whereIn('kind', [...onlyKinds]);
		})
		.update({
			status: 'resolved',
			resolved_by: note.by ?? null,
			resolved_at: checkedAt,
			comment: note.comment
		});
	return { opened, stillOpen, resolved };
}

/** "3 Dec 2026, 02:00 America/Chicago" — the check's instant in the shop's own time zone. */
export function localStamp(at: Date, timeZone: string): string {
	const text = at.toLocaleString('en-GB', {
		timeZone,
		day: 'numeric',
		month: 'short',
		year: 'numeric',
		hour: '2-digit',
		minute: '2-digit'
	});
	return `${text} ${timeZone}`;
}

/** YYYY-MM-DD of an instant in the shop's time zone (the digest's "day"). */
export function localDate(at: Date, timeZone: string): string {
	return new Intl.DateTimeFormat('en-CA', {
		timeZone,
		year: 'numeric',
		month: '2-digit',
		day: '2-digit'
	}).format(at);
}
