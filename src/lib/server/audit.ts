import type { Knex } from 'knex';

export interface AuditEntry {
	actorUserId?: number | null;
	actorEmail?: string;
	action: string;
	target?: string;
	detail?: Record<string, unknown>;
	ip?: string;
}

/** Appends to the shop's audit log. `trx` must be a shop transaction (see withShop). */
export async function audit(trx: Knex.Transaction, e: AuditEntry): Promise<void> {
	await trx('audit_log').insert({
		actor_user_id: e.actorUserId ?? null,
		actor_email: e.actorEmail ?? '',
		action: e.action,
		target: e.target ?? '',
		detail: JSON.stringify(e.detail ?? {}),
		ip: e.ip ?? ''
	});
}
