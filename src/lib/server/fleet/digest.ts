import type { Knex } from 'knex';
import { findingTitle } from '$lib/offsets';
import { config } from '../config';
import { db } from '../db';
import { withShop } from '../db/tenant';
import { sendEmail } from '../email/send';
import type { ShopRow } from '../shops/queries';
import { localDate } from './check';

/** Roles that get the morning digest (DESIGN.md §6: those who act on findings). */
export const DIGEST_ROLES = ['owner', 'admin', 'lead'] as const;

export interface DigestFinding {
	id: number;
	machineId: number;
	machineName: string;
	severity: 'stop' | 'caution';
	subject: string;
	/** Plain title of the kind (never the code). */
	title: string;
	message: string;
	status: 'open' | 'acknowledged';
	isNew: boolean;
}

export interface DigestResult {
	day: string;
	recipients: number;
	sent: number;
	alreadySent: number;
	failed: number;
}

/**
 * The morning digest after a nightly check: to each owner, admin and lead of the shop who has
 * not opted out, the findings that are new since the last day and those still open, grouped
 * by machine, with links. At most one per member per day is a database rule: the e-mail log's
 * unique dedupe key `digest:<shop>:<user>:<day in the shop's time zone>` is claimed before
 * sending, so a retried job or a restarted worker finds it taken and sends nothing.
 * Nothing is sent when nothing is open. A failed send releases its key and throws after the
 * others were tried, so the job's retry (with backoff) sends only the missing ones.
 */
export async function sendDigests(
	shop: ShopRow & { slug: string; name: string },
	checkedAt: Date,
	knex: Knex = db()
): Promise<DigestResult> {
	const day = localDate(checkedAt, shop.timeZone);
	const findings = await withShop(shop, (trx) => digestFindings(trx, checkedAt), knex);
	const members = await knex('public.memberships as m')
		.join('public.users as u', 'u.id', 'm.user_id')
		.where({ 'm.shop_id': shop.id, 'm.digest_opt_out': false })
		.whereIn('m.role', DIGEST_ROLES as unknown as string[])
		.orderBy('u.id')
		.select('u.id', 'u.email', 'u.name');
	const result: DigestResult = { day, recipients: 0, sent: 0, alreadySent: 0, failed: 0 };
	if (findings.length === 0) return result;
	result.recipients = members.length;
	const mail = renderDigest(shop, day, findings);
	const errors: string[] = [];
	for (const m of members) {
		try {
			const sent = await sendEmail(knex, {
				to: m.email,
				...mail,
				kind: 'digest',
				shopId: shop.id,
				dedupeKey: `digest:${shop.id}:${m.id}:${day}`
			});
			if (sent) result.sent += 1;
			else result.alreadySent += 1;
		} catch (e) {
			result.failed += 1;
			errors.push(`${m.email}: ${(e as Error).message}`);
		}
	}
	if (errors.length > 0) {
		throw new Error(`digest not sent to ${errors.length} member(s): ${errors.join('; ')}`);
	}
	return result;
}

/** Unresolved findings: new ones (first seen in the day before the check) and open older ones. */
export async function digestFindings(
	trx: Knex.Transaction,
	checkedAt: Date
): Promise<DigestFinding[]> {
	const since = new Date(checkedAt.getTime() - 24 * 3_600_000);
	const rows = await trx('findings as f')
		.join('machines as m', 'm.id', 'f.machine_id')
		.whereNull('m.archived_at')
		.where((q) =>
			q
				.where('f.status', 'open')
				.orWhere((q2) => q2.where('f.status', 'acknowledged').where('f.first_seen_at', '>', since))
		)
		.orderBy([
			{ column: 'm.name' },
			{ column: 'f.severity', order: 'desc' },
			{ column: 'f.first_seen_at', order: 'desc' },
			{ column: 'f.id' }
		])
		.select(
			'f.id',
			'f.machine_id',
			'm.name as machine_name',
			'f.severity',
			'f.subject',
			'f.kind',
			'f.message',
			'f.status',
			'f.first_seen_at'
		);
	return rows.map((r) => ({
		id: Number(r.id),
		machineId: Number(r.machine_id),
		machineName: r.machine_name,
		severity: r.severity,
		subject: r.subject,
		title: findingTitle(r.kind),
		message: r.message,
		status: r.status,
		isNew: new Date(r.first_seen_at) > since
	}));
}

const escape = (s: string) =>
	s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

const WORD = { stop: '⛔ Stop', caution: '⚠ Caution' } as const;

/** Text and HTML parts from the same grouping (every e-mail has both). */
export function renderDigest(
	shop: { slug: string; name: string },
	day: string,
	findings: DigestFinding[]
): { subject: string; text: string; html: string } {
	const base = `${config.origin}/shops/${shop.slug}`;
	const fresh = findings.filter((f) => f.isNew).length;
	const stops = findings.filter((f) => f.severity === 'stop').length;
	const subject = `${shop.name}: ${findings.length} finding${findings.length === 1 ? '' : 's'} to look at${stops ? ` (${stops} marked Stop)` : ''} — ${day}`;
	const groups = new Map<number, DigestFinding[]>();
	for (const f of findings) groups.set(f.machineId, [...(groups.get(f.machineId) ?? []), f]);

	const text: string[] = [
		`Morning digest for ${shop.name}, ${day}.`,
		`${fresh} new since yesterday, ${findings.length - fresh} still open from before.`,
		''
	];
	const html: string[] = [
		`<p style="line-height:1.5">Morning digest for <strong>${escape(shop.name)}</strong>, ${day}.<br>${fresh} new since yesterday, ${findings.length - fresh} still open from before.</p>`
	];
	for (const list of groups.values()) {
		const link = `${base}/findings?machine=${list[0].machineId}`;
		text.push(`${list[0].machineName} — ${link}`);
		html.push(
			`<h2 style="font-size:16px;margin:20px 0 6px"><a href="${escape(link)}" style="color:#1f6f78">${escape(list[0].machineName)}</a></h2><ul style="padding-left:18px;margin:0">`
		);
		for (const f of list) {
			const tag = `${WORD[f.severity]}${f.isNew ? ' · new' : ''}${f.status === 'acknowledged' ? ' · acknowledged' : ''}`;
			text.push(`  [${tag}] ${f.subject} — ${f.title}: ${f.message}`);
			html.push(
				`<li style="margin:4px 0;line-height:1.4"><strong>${escape(tag)}</strong> — ${escape(f.subject)} — <strong>${escape(f.title)}</strong>: ${escape(f.message)}</li>`
			);
		}
		text.push('');
		html.push('</ul>');
	}
	text.push(`Fleet board: ${base}/fleet`, `All findings: ${base}/findings`, '');
	text.push(
		'You get this because you are an owner, admin or lead of the shop. Turn it off on the Findings page.',
		'--',
		'Datumkeep — offsets you can trust at the machine.'
	);
	const body = `<!doctype html><html><body style="font-family:Inter,Arial,sans-serif;color:#16181d;background:#f6f6f4;padding:24px">
<div style="max-width:640px;margin:auto;background:#fff;border:1px solid #e7e5e4;border-radius:8px;padding:24px">
${html.join('\n')}
<p style="margin-top:20px"><a href="${escape(`${base}/fleet`)}" style="display:inline-block;background:#1f6f78;color:#fff;padding:10px 16px;border-radius:6px;text-decoration:none">Open the fleet board</a></p>
<p style="font-size:12px;color:#57534e">You get this because you are an owner, admin or lead of the shop. Turn it off on the <a href="${escape(`${base}/findings`)}">Findings</a> page.</p>
<p style="font-size:12px;color:#57534e">Datumkeep — offsets you can trust at the machine.</p>
</div></body></html>`;
	return { subject, text: text.join('\n'), html: body };
}
