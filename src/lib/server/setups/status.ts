import type { Knex } from 'knex';
import { NEXT_STATE, SETUP_STATE_LABEL, type SetupState } from '$lib/schemas/setups';
import { audit } from '../audit';
import { latestSignoff } from './signoff';
import type { Actor } from '../actor';
import type { WriteResult } from './write';

/** A setup's state changes. `trx` is a shop transaction. */

/**
 * Moves a setup one step forward (planned → on-machine → proven → closed), or closes it from
 * any open state (a plan dropped). Recorded with who and when, in the status history and the
 * shop's audit log.
 */
export async function changeSetupStatus(
	trx: Knex.Transaction,
	setupId: number,
	to: SetupState,
	actor: Actor,
	note = ''
): Promise<WriteResult<SetupState>> {
	const current = await trx('setups').where({ id: setupId }).forUpdate().first();
	if (!current) return { ok: false, issues: [{ field: 'to', message: 'No such setup.' }] };
	const from = current.status as SetupState;
	const allowed = NEXT_STATE[from] === to || (to === 'closed' && from !== 'closed');
	if (!allowed) {
		const next = NEXT_STATE[from];
		return {
			ok: false,
			issues: [
				{
					field: 'to',
					message: `A setup that is ${SETUP_STATE_LABEL[from].toLowerCase()} cannot become ${SETUP_STATE_LABEL[to].toLowerCase()}${next ? `: next is ${SETUP_STATE_LABEL[next].toLowerCase()}` : ': it is closed; copy it to run the job again'}.`
				}
			]
		};
	}
	// Proven means someone entered, verified at the control and checked the first part: signed off.
	if (to === 'proven' && !(await latestSignoff(trx, setupId))) {
		return {
			ok: false,
			issues: [
				{
					field: 'to',
					message:
						'A setup becomes proven only with its sign-off: record who entered the offsets, who verified them at the control and who checked the first part.'
				}
			]
		};
	}
	await trx('setups').where({ id: setupId }).update({ status: to });
	await trx('setup_status_changes').insert({
		setup_id: setupId,
		from_status: from,
		to_status: to,
		changed_by: actor.id,
		note
	});
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'setup.status',
		target: `setup ${setupId}`,
		detail: { name: current.name, from, to, note }
	});
	return { ok: true, value: to };
}
