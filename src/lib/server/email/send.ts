import type { Knex } from 'knex';
import { sendViaSes, type OutgoingEmail } from './ses';

export interface LoggedEmail extends OutgoingEmail {
	kind: string;
	shopId?: number | null;
	/** When set, at most one e-mail with this key is ever sent (e.g. digest:member:date). */
	dedupeKey?: string;
}

/**
 * Sends one e-mail and records it in public.email_log. With a dedupe key the log row is
 * claimed first (unique index), so a retried job or a second worker cannot send it again.
 * Returns false when the key was already used.
 */
export async function sendEmail(knex: Knex, mail: LoggedEmail): Promise<boolean> {
	const [row] = await knex('public.email_log')
		.insert({
			shop_id: mail.shopId ?? null,
			to_address: mail.to,
			subject: mail.subject,
			kind: mail.kind,
			dedupe_key: mail.dedupeKey ?? null
		})
		.onConflict('dedupe_key')
		.ignore()
		.returning('id');
	if (!row) return false;
	try {
		const id = await sendViaSes(mail);
		await knex('public.email_log')
			.where({ id: row.id })
			.update({ provider_message_id: id ?? null });
		return true;
	} catch (e) {
		// Release the claim so a retry can send it.
		await knex('public.email_log').where({ id: row.id }).del();
		throw e;
	}
}
