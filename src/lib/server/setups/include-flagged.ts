import { error, type RequestEvent } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { can, type Role } from '$lib/permissions';
import { audit } from '../audit';
import { clientAddress } from '../auth/client-address';
import type { GatedRegister } from '../offsets/gate';

/**
 * `?include=flagged` on a load-program download: a lead's explicit choice to write Stop and
 * stale registers (each with a warning comment). Operators are refused (403); the choice is
 * audited with the registers it included.
 */
export function includeFlaggedRequested(event: RequestEvent, role: Role): boolean {
	if (event.url.searchParams.get('include') !== 'flagged') return false;
	if (!can(role, 'machines.write'))
		error(
			403,
			'Only a lead, admin or owner may include Stop or stale registers in a load program.'
		);
	return true;
}

/** The audit entry of an included download (only when something flagged was included). */
export async function auditIncluded(
	trx: Knex.Transaction,
	event: RequestEvent,
	user: { id: number; email: string },
	target: string,
	included: GatedRegister[]
): Promise<void> {
	if (included.length === 0) return;
	await audit(trx, {
		actorUserId: user.id,
		actorEmail: user.email,
		ip: clientAddress(event),
		action: 'load-program.included-flagged',
		target,
		detail: {
			registers: included.map((r) => ({ register: r.label, status: r.status, value: r.value }))
		}
	});
}
