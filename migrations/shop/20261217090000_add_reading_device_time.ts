import type { Knex } from 'knex';

/**
 * Readings saved on a device while the connection was down and sent later: the time the
 * operator measured (by the device's clock) beside `taken_at`, which is when the server
 * received and recorded it; and the device's idempotency key, unique, so a queued reading sent
 * twice (a retry, two tabs) is recorded once.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('readings', (t) => {
		/** When the operator measured, by the device's clock; null when sent at once (taken_at). */
		t.timestamp('measured_at', { useTz: true });
		/** The device's key for a queued reading (a random UUID made when it was queued). */
		t.uuid('client_key');
	});
	await knex.raw(`alter table readings
		add constraint readings_client_key_unique unique (client_key),
		add constraint readings_measured_before_received
			check (measured_at is null or measured_at <= taken_at + interval '10 minutes')`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`alter table readings
		drop constraint readings_measured_before_received,
		drop constraint readings_client_key_unique`);
	await knex.schema.alterTable('readings', (t) => {
		t.dropColumn('client_key');
		t.dropColumn('measured_at');
	});
}
