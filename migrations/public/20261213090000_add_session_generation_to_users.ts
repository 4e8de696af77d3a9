import type { Knex } from 'knex';

/**
 * A person's session generation (ends every session at once). Every session cookie carries the generation it
 * was issued under; the app accepts a cookie only while it equals the row's value. Password
 * reset, sign-out and removal from a shop add one, so every older cookie stops working at
 * once (the users trigger drops the cached sessions: `user:<id>`).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('users', (t) => {
		t.integer('session_generation').notNullable().defaultTo(0);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('users', (t) => {
		t.dropColumn('session_generation');
	});
}
