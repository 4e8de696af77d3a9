import type { Knex } from 'knex';

/**
 * What happened to shops as a whole (issue 18): deletion asked, restored, data dropped,
 * ownership handed over, exports. Kept in `public`, because a dropped shop's own audit log goes
 * with its schema. Append-only, enforced by a trigger.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('shop_lifecycle_log', (t) => {
		t.bigIncrements('id').primary();
		t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.bigInteger('shop_id').notNullable();
		t.text('shop_slug').notNullable();
		t.text('action').notNullable();
		t.bigInteger('actor_user_id');
		t.text('actor_email').notNullable().defaultTo('');
		t.jsonb('detail').notNullable().defaultTo('{}');
		t.index(['shop_id', 'at'], 'shop_lifecycle_log_shop_at_idx');
	});
	await knex.raw(`create function shop_lifecycle_log_refuse_change() returns trigger language plpgsql as $$
		begin raise exception 'shop_lifecycle_log is append-only'; end $$`);
	await knex.raw(
		`create trigger shop_lifecycle_log_append_only before update or delete on shop_lifecycle_log for each statement execute function shop_lifecycle_log_refuse_change()`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('shop_lifecycle_log');
	await knex.raw('drop function if exists shop_lifecycle_log_refuse_change()');
}
