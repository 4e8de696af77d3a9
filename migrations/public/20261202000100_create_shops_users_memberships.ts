import type { Knex } from 'knex';

/** Shops (customers), people, and who belongs to which shop with what role (DESIGN.md §5–6). */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('shops', (t) => {
		t.bigIncrements('id').primary();
		t.text('slug').notNullable().unique('shops_slug_unique');
		t.text('name').notNullable();
		t.text('schema_name').unique('shops_schema_name_unique');
		t.text('time_zone').notNullable().defaultTo('UTC');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(
		`alter table shops add constraint shops_slug_format check (slug ~ '^[a-z0-9]([a-z0-9-]{0,46}[a-z0-9]){0,1}$')`
	);

	await knex.schema.createTable('users', (t) => {
		t.bigIncrements('id').primary();
		t.text('email').notNullable();
		t.text('name').notNullable();
		t.text('password_hash');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw('create unique index users_email_lower_unique on users (lower(email))');

	await knex.schema.createTable('memberships', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('user_id').notNullable().references('users.id').onDelete('CASCADE');
		t.bigInteger('shop_id').notNullable().references('shops.id').onDelete('CASCADE');
		t.text('role').notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['user_id', 'shop_id'], { indexName: 'memberships_user_shop_unique' });
		t.index(['shop_id'], 'memberships_shop_idx');
	});
	await knex.raw(
		`alter table memberships add constraint memberships_role_check check (role in ('owner','admin','lead','operator'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('memberships');
	await knex.schema.dropTable('users');
	await knex.schema.dropTable('shops');
}
