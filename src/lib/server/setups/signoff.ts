import type { Knex } from 'knex';
import { iso } from '../db/convert';
import type { SetupSignoff } from '$lib/schemas/setups';
import { audit } from '../audit';

/** A recorded sign-off (the newest counts; rows are never edited). `trx` is a shop transaction. */
export interface SignoffRecord extends SetupSignoff {
	recordedAt: string;
	recordedByName: string | null;
}

const day = (v: unknown) =>
	v instanceof Date ? v.toISOString().slice(0, 10) : String(v).slice(0, 10);

export async function latestSignoff(
	trx: Knex.Transaction,
	setupId: number
): Promise<SignoffRecord | null> {
	const r = await trx('setup_signoffs as s')
		.leftJoin('public.users as u', 'u.id', 's.recorded_by')
		.where('s.setup_id', setupId)
		.orderBy([
			{ column: 's.recorded_at', order: 'desc' },
			{ column: 's.id', order: 'desc' }
		])
		.first('s.*', 'u.name as recorded_by_name');
	if (!r) return null;
	return {
		enteredBy: r.entered_by,
		enteredOn: day(r.entered_on),
		verifiedBy: r.verified_by,
		verifiedOn: day(r.verified_on),
		firstPartBy: r.first_part_by,
		firstPartOn: day(r.first_part_on),
		note: r.note,
		recordedAt: iso(r.recorded_at),
		recordedByName: r.recorded_by_name ?? null
	};
}

/** Records a sign-off (append-only) and audits it. */
export async function recordSignoff(
	trx: Knex.Transaction,
	setupId: number,
	s: SetupSignoff,
	actor: { id: number; email: string },
	ip = ''
): Promise<void> {
	await trx('setup_signoffs').insert({
		setup_id: setupId,
		entered_by: s.enteredBy,
		entered_on: s.enteredOn,
		verified_by: s.verifiedBy,
		verified_on: s.verifiedOn,
		first_part_by: s.firstPartBy,
		first_part_on: s.firstPartOn,
		note: s.note,
		recorded_by: actor.id
	});
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'setup.signoff',
		target: `setup ${setupId}`,
		detail: { ...s },
		ip
	});
}
