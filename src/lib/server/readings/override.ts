/**
 * Saving over a Stop ("Save anyway"): the server's gate, whatever the page sent, and what an
 * override leaves behind (an audit entry and an open finding leads see on the board and in the
 * digest). `trx` is the caller's shop transaction.
 */
import type { Knex } from 'knex';
import { findingTitle } from '$lib/offsets';
import { stopsOf, type BriefFinding, type ReadingPreview } from '$lib/reading-preview';
import type { Actor } from '../actor';
import { audit } from '../audit';
import type { MachineRecord } from '../offsets/machine-state';
import { fmtOf, ReadingInputError } from './input';

/** What the operator chose in the override dialog. */
export interface OverrideChoice {
	requested: boolean;
	reason: string;
}

/**
 * Server-side gate of the override: a value the checks call Stop is saved only with "Save
 * anyway" and a reason, whatever the page sent. Nothing is written when it refuses.
 */
export function requireOverride(
	machine: MachineRecord,
	preview: ReadingPreview,
	o: OverrideChoice
) {
	const stops = stopsOf(preview);
	if (stops.length === 0) return null;
	if (o.requested && o.reason.trim().length > 0) return stops;
	const titles = [...new Set(stops.map((f) => findingTitle(f.kind)))].join('; ');
	throw ReadingInputError.of(
		'overrideReason',
		`${preview.label} ${fmtOf(machine)(preview.value)} is Stop (${titles}). It was not saved: re-measure it, or choose "Save anyway" and give the reason.`
	);
}

/** The override's audit entry and its finding, which leads see on the board and in the digest. */
export async function recordOverride(
	trx: Knex.Transaction,
	machine: MachineRecord,
	actor: Actor,
	preview: ReadingPreview,
	overridden: BriefFinding[],
	reason: string,
	ref: { readingId: number; subjectKey: string; auditTarget: string }
) {
	const user = await trx('public.users').where({ id: actor.id }).first('name');
	const who = user?.name || actor.email;
	const titles = [...new Set(overridden.map((f) => findingTitle(f.kind)))].join('; ');
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'reading.override',
		target: ref.auditTarget,
		detail: {
			machineId: machine.id,
			readingId: ref.readingId,
			register: preview.label,
			value: preview.value,
			units: machine.units,
			overridden: overridden.map((f) => f.kind),
			reason
		}
	});
	const now = new Date().toISOString();
	await trx.raw(
		`insert into findings as f (key, machine_id, kind, severity, subject_type, subject, message,
			status, first_seen_at, last_seen_at, previous_finding_id)
		values (:key, :machineId, 'override', 'stop', :subjectType, :subject, :message, 'open', :now, :now,
			(select p.id from findings p where p.key = :key and p.status = 'resolved'
				order by p.resolved_at desc nulls last, p.id desc limit 1))
		on conflict (key) where status <> 'resolved' do update set
			message = excluded.message, last_seen_at = excluded.last_seen_at`,
		{
			key: `m${machine.id}|override|${ref.subjectKey}`,
			machineId: machine.id,
			subjectType: preview.registerKind === 'tool' ? 'tool' : 'fixture',
			subject: preview.label,
			message: `${preview.label} was saved as ${fmtOf(machine)(preview.value)} over a Stop (${titles}) by ${who} (reading #${ref.readingId}): "${reason}". It stays out of load programs; check it at the control or re-measure it.`,
			now
		}
	);
}
