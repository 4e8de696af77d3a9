/**
 * Findings as rows of the shop's `findings` table: their key, what they are about in words, and
 * the one statement that stores them (used by the machine-by-machine check and the set-based
 * one, so both store alike).
 */
import type { Knex } from 'knex';
import type { Finding } from '$lib/offsets';

/** A finding's row key in the shop: machine first, since the engine's key is per machine. */
export const findingRowKey = (machineId: number, f: Pick<Finding, 'key'>) =>
	`m${machineId}|${f.key}`;

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

/** One finding as the row `upsertFindingRows` stores. */
export interface FindingRow {
	key: string;
	machine_id: number;
	kind: string;
	severity: string;
	subject_type: string;
	subject: string;
	message: string;
}

/**
 * The rows of some machines' findings, one per key: the engine may name one problem twice (e.g.
 * two setups sharing a pair); the last one named is kept.
 */
export function findingRows(
	machines: { machineId: number; findings: Finding[]; setupNames: Map<string, string> }[]
): Map<string, FindingRow> {
	const rows = new Map<string, FindingRow>();
	for (const m of machines)
		for (const f of m.findings) {
			const key = findingRowKey(m.machineId, f);
			rows.set(key, {
				key,
				machine_id: m.machineId,
				kind: f.kind,
				severity: f.severity,
				subject_type: f.subject.type,
				subject: subjectLabel(f, m.setupNames),
				message: f.message
			});
		}
	return rows;
}

/**
 * Stores rows found at `checkedAt`: the same problem still found updates its live row; one found
 * again after it was resolved is a new row linked to the resolved one. Returns how many rows
 * are new and how many were open already.
 */
export async function upsertFindingRows(
	trx: Knex.Transaction,
	rows: Map<string, FindingRow>,
	checkedAt: Date
): Promise<{ opened: number; stillOpen: number }> {
	let opened = 0;
	let stillOpen = 0;
	if (rows.size === 0) return { opened, stillOpen };
	const { rows: stored } = await trx.raw(
		`insert into findings as f (key, machine_id, kind, severity, subject_type, subject, message,
			status, first_seen_at, last_seen_at, previous_finding_id)
		select x.key, x.machine_id, x.kind, x.severity, x.subject_type, x.subject, x.message,
			'open', :at, :at,
			(select p.id from findings p where p.key = x.key and p.status = 'resolved'
				order by p.resolved_at desc nulls last, p.id desc limit 1)
		from jsonb_to_recordset(cast(:rows as jsonb)) as x(key text, machine_id bigint, kind text,
			severity text, subject_type text, subject text, message text)
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
		{ at: checkedAt.toISOString(), rows: JSON.stringify([...rows.values()]) }
	);
	for (const r of stored as { is_new: boolean }[]) {
		if (r.is_new) opened += 1;
		else stillOpen += 1;
	}
	return { opened, stillOpen };
}
