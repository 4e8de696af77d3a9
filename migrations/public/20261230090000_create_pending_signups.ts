import type { Knex } from 'knex';

/**
 * Sign-ups waiting for their e-mail link (issue 13: sign-up must not tell a known e-mail from a
 * new one). Nothing exists until the link is followed: the row keeps what the form said, the
 * password already hashed (same bcrypt cost as accounts) and only a SHA-256 of the token.
 * A sign-up for an address that already has an account is kept the same way (same work, same
 * answer) but marked, and its token is never sent: it can create nothing.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('pending_signups', (t) => {
		t.bigIncrements('id').primary();
		t.text('email').notNullable();
		t.text('name').notNullable();
		t.text('password_hash').notNullable();
		t.text('shop_name').notNullable();
		t.text('shop_slug').notNullable();
		t.text('token_hash').notNullable().unique('pending_signups_token_hash_unique');
		t.boolean('known_account').notNullable().defaultTo(false);
		t.text('ip').notNullable().defaultTo('');
		t.timestamp('expires_at', { useTz: true }).notNullable();
		t.timestamp('used_at', { useTz: true });
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['expires_at'], 'pending_signups_expires_idx');
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('pending_signups');
}
