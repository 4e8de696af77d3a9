import type { Knex } from 'knex';
import type { Finding } from '$lib/offsets';
import { db } from '../db';
import { withShop } from '../db/tenant';
import { machineState, toMachineRecord } from '../offsets/machine-state';
import type { ShopInfo } from '../shops/queries';
import { readbackFindings, readbackHours } from '../readbacks/findings';
import { componentFindings } from '../components/findings';

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
 * Writes that change a machine's offsets re-run its checks at once (./recheck.ts).
 * Each machine is its own transaction: a crash half-way leaves whole machines done, and the
 * retry does them again to the same result.
 */
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

/** A finding's row key in the shop: machine first, since the engine's key is per machine. */
export const findingRowKey = (machineId: number, f: Pick<Finding, 'key'>) =>
	`m${machineId}|${f.key}`;

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
	let done = 0;
	for (const machine of machines) {
		const r = await withShop(
			shop,
			async (trx) => {
				const state = await machineState(trx, machine, checkedAt);
				const names = new Map<string, string>();
				for (const s of state.checkInput.setups ?? []) if (s.id && s.name) names.set(s.id, s.name);
				// Read-backs at the control: mismatches and registers not verified in time.
				const readback = await readbackFindings(
					trx,
					machine,
					checkedAt,
					await readbackHours(trx, shop.id)
				);
				// X/Y, radius and wear registers (issue 20): wear past the limit, stale X/Y, slips.
				const components = await componentFindings(trx, machine, checkedAt);
				const found = [...state.findings, ...readback, ...components];
				return storeFindings(
					trx,
					machine.id,
					found,
					checkedAt,
					{ comment: `no longer found by the check at ${stamp}` },
					names
				);
			},
			knex
		);
		summary.opened += r.opened;
		summary.stillOpen += r.stillOpen;
		summary.resolved += r.resolved;
		done += 1;
		await run.onProgress?.(done, machines.length);
	}

	await withShop(
		shop,
		(trx) =>
			trx('check_runs').where({ job_id: run.jobId }).update({
				status: 'done',
				finished_at: trx.fn.now(),
				machines: summary.machines,
				opened: summary.opened,
				still_open: summary.stillOpen,
				resolved: summary.resolved
			}),
		knex
	);
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

/** What a finding is about, as a machinist reads it: "H3", "G54", "Setup Aluminium bracket · G54". */
export function subjectLabel(f: Finding, setupNames: Map<string, string> = new Map()): string {
	const s = f.subject;
	switch (s.type) {
		case 'machine':
			return 'Whole machine';
		case 'fixture':
			return s.register;
		case 'tool':
			return `H${s.h}`;
		case 'setup':
			return [
				`Setup ${(s.id && setupNames.get(s.id)) ?? s.id ?? ''}`.trim(),
				s.register,
				s.h ? `H${s.h}` : undefined
			]
				.filter(Boolean)
				.join(' · ');
		case 'program-line':
			return `Line ${s.line}`;
	}
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
	const unique = [...new Map(findings.map((f) => [findingRowKey(machineId, f), f])).entries()];
	let opened = 0;
	let stillOpen = 0;
	if (unique.length > 0) {
		const { rows } = await trx.raw(
			`insert into findings as f (key, machine_id, kind, severity, subject_type, subject, message,
				status, first_seen_at, last_seen_at, previous_finding_id)
			select x.key, :machineId, x.kind, x.severity, x.subject_type, x.subject, x.message,
				'open', :at, :at,
				(select p.id from findings p where p.key = x.key and p.status = 'resolved'
					order by p.resolved_at desc nulls last, p.id desc limit 1)
			from jsonb_to_recordset(cast(:rows as jsonb)) as x(key text, kind text, severity text,
				subject_type text, subject text, message text)
			-- An older check retried late must not bring back what was resolved after it looked.
			where exists (select 1 from findings l where l.key = x.key and l.status <> 'resolved')
				or not exists (select 1 from findings r where r.key = x.key and r.status = 'resolved'
					and r.resolved_at >= :at)
			on conflict (key) where status <> 'resolved' do update set
				severity = excluded.severity,
				subject = excluded.subject,
				message = excluded.message,
				last_seen_at = greatest(f.last_seen_at, excluded.last_seen_at)
			returning f.first_seen_at = :at as is_new`,
			{
				machineId,
				at: checkedAt.toISOString(),
				rows: JSON.stringify(
					unique.map(([key, f]) => ({
						key,
						kind: f.kind,
						severity: f.severity,
						subject_type: f.subject.type,
						subject: subjectLabel(f, setupNames),
						message: f.message
					}))
				)
			}
		);
		for (const r of rows) {
			if (r.is_new) opened += 1;
			else stillOpen += 1;
		}
	}
	const found = unique.map(([key]) => key);
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
