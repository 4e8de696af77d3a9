import type { Knex } from 'knex';

/**
 * Every e-mail the app sent. `dedupe_key` makes "at most one of these" a database rule
 * (e.g. one digest per member per day), so a retried job cannot send twice.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('email_log', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('shop_id').references('shops.id').onDelete('SET NULL');
		t.text('to_address').notNullable();
		t.text('subject').notNullable();
		t.text('kind').notNullable();
		t.text('dedupe_key').unique('email_log_dedupe_key_unique');
		t.text('provider_message_id');
		t.timestamp('sent_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('email_log');
}
