import type { Knex } from 'knex';
import { iso, isoOrNull } from '../db/convert';
import type { FindingRow } from '../db/tables';
import type { FindingFilter } from '$lib/schemas/fleet';
import { audit } from '../audit';

export interface FindingListItem {
	id: number;
	machineId: number | null;
	machineName: string | null;
	kind: string;
	severity: 'stop' | 'caution';
	subjectType: string;
	subject: string;
	message: string;
	status: 'open' | 'acknowledged' | 'resolved';
	firstSeenAt: string;
	lastSeenAt: string;
	acknowledgedBy: string | null;
	acknowledgedAt: string | null;
	resolvedBy: string | null;
	resolvedAt: string | null;
	comment: string;
	/** The resolved finding this one repeats (it came back), if any. */
	previousId: number | null;
}

type ListedFinding = FindingRow & {
	machine_name: string | null;
	acknowledged_by_name: string | null;
	resolved_by_name: string | null;
};

/** Findings with the filter, stop first, newest first; at most `limit`. `trx` is a shop transaction. */
export async function listFindings(
	trx: Knex.Transaction,
	filter: FindingFilter,
	limit = 500
): Promise<FindingListItem[]> {
	const rows = await trx('findings as f')
		.leftJoin('machines as m', 'm.id', 'f.machine_id')
		.leftJoin('public.users as ua', 'ua.id', 'f.acknowledged_by')
		.leftJoin('public.users as ur', 'ur.id', 'f.resolved_by')
		.modify((q) => {
			if (filter.machine) q.where('f.machine_id', filter.machine);
			if (filter.severity !== 'any') q.where('f.severity', filter.severity);
			if (filter.status === 'unresolved') q.whereNot('f.status', 'resolved');
			else if (filter.status !== 'all') q.where('f.status', filter.status);
		})
		.orderByRaw(
			"case f.status when 'open' then 0 when 'acknowledged' then 1 else 2 end, case f.severity when 'stop' then 0 else 1 end, f.last_seen_at desc, f.id desc"
		)
		.limit(limit)
		.select(
			'f.*',
			'm.name as machine_name',
			'ua.name as acknowledged_by_name',
			'ur.name as resolved_by_name'
		);
	return rows.map((r: ListedFinding) => ({
		id: Number(r.id),
		machineId: r.machine_id === null ? null : Number(r.machine_id),
		machineName: r.machine_name ?? null,
		kind: r.kind,
		severity: r.severity as FindingListItem['severity'],
		subjectType: r.subject_type,
		subject: r.subject,
		message: r.message,
		status: r.status as FindingListItem['status'],
		firstSeenAt: iso(r.first_seen_at),
		lastSeenAt: iso(r.last_seen_at),
		acknowledgedBy: r.acknowledged_by_name ?? null,
		acknowledgedAt: isoOrNull(r.acknowledged_at),
		resolvedBy: r.resolved_by_name ?? (r.status === 'resolved' ? 'the check' : null),
		resolvedAt: isoOrNull(r.resolved_at),
		comment: r.comment,
		previousId: r.previous_finding_id === null ? null : Number(r.previous_finding_id)
	}));
}

export type FindingAction = 'acknowledge' | 'resolve';

/**
 * A lead acknowledges ("seen, it can wait because…") or resolves ("fixed: …") a finding with a
 * comment; both are written to the shop's audit log in the same transaction. Acknowledging a
 * resolved finding, or resolving one twice, is refused with a plain reason.
 */
export async function actOnFinding(
	trx: Knex.Transaction,
	id: number,
	action: FindingAction,
	comment: string,
	actor: { id: number; email: string },
	ip = ''
): Promise<{ ok: true } | { ok: false; message: string }> {
	const f = await trx('findings').where({ id }).forUpdate().first();
	if (!f) return { ok: false, message: 'That finding is not in this shop.' };
	if (f.status === 'resolved') return { ok: false, message: 'That finding is already resolved.' };
	if (action === 'acknowledge' && f.status === 'acknowledged')
		return { ok: false, message: 'That finding is already acknowledged.' };
	const now = new Date();
	await trx('findings')
		.where({ id })
		.update(
			action === 'acknowledge'
				? { status: 'acknowledged', acknowledged_by: actor.id, acknowledged_at: now, comment }
				: { status: 'resolved', resolved_by: actor.id, resolved_at: now, comment }
		);
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: action === 'acknowledge' ? 'finding.acknowledge' : 'finding.resolve',
		target: `finding:${id}`,
		detail: { kind: f.kind, subject: f.subject, machineId: f.machine_id, comment },
		ip
	});
	return { ok: true };
}

/** Audit entries of the listed findings (who acknowledged/resolved, when, with what comment). */
export async function findingHistory(
	trx: Knex.Transaction,
	ids: number[]
): Promise<Record<number, { action: string; by: string; at: string; comment: string }[]>> {
	if (ids.length === 0) return {};
	const rows = await trx('audit_log as a')
		.leftJoin('public.users as u', 'u.id', 'a.actor_user_id')
		.whereIn(
			'a.target',
			ids.map((id) => `finding:${id}`)
		)
		.orderBy('a.id')
		.select('a.target', 'a.action', 'a.detail', 'a.at', 'a.actor_email', 'u.name');
	const out: Record<number, { action: string; by: string; at: string; comment: string }[]> = {};
	for (const r of rows) {
		const id = Number(String(r.target).slice('finding:'.length));
		const detail = typeof r.detail === 'string' ? JSON.parse(r.detail) : (r.detail ?? {});
		(out[id] ??= []).push({
			action: r.action === 'finding.acknowledge' ? 'Acknowledged' : 'Resolved',
			by: r.name ?? r.actor_email,
			at: iso(r.at),
			comment: String(detail.comment ?? '')
		});
	}
	return out;
}
