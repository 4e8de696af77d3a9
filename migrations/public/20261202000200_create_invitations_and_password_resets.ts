import type { Knex } from 'knex';

/** Single-use tokens: invitations to a shop and password resets. Only a hash of each token is kept. */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('invitations', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('shop_id').notNullable().references('shops.id').onDelete('CASCADE');
		t.text('email').notNullable();
		t.text('role').notNullable();
		t.text('token_hash').notNullable().unique('invitations_token_hash_unique');
		t.bigInteger('invited_by').references('users.id').onDelete('SET NULL');
		t.timestamp('expires_at', { useTz: true }).notNullable();
		t.timestamp('accepted_at', { useTz: true });
		t.timestamp('revoked_at', { useTz: true });
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['shop_id'], 'invitations_shop_idx');
	});
	await knex.raw(
		`alter table invitations add constraint invitations_role_check check (role in ('owner','admin','lead','operator'))`
	);

	await knex.schema.createTable('password_resets', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.text('token_hash').notNullable().unique('password_resets_token_hash_unique');
		t.timestamp('expires_at', { useTz: true }).notNullable();
		t.timestamp('used_at', { useTz: true });
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('password_resets');
	await knex.schema.dropTable('invitations');
}
