import type { Knex } from 'knex';

/**
 * "Export everything" requests (issue 18): built by the `shop-export` worker with progress; the
 * archive sits under the uploads folder, reached by a link whose token is stored only as a
 * SHA-256 hash and stops working at `expires_at`.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('shop_exports', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('shop_id').notNullable().references('shops.id').onDelete('CASCADE');
		t.bigInteger('requested_by').notNullable().references('users.id').onDelete('CASCADE');
		t.timestamp('requested_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.text('status').notNullable().defaultTo('queued');
		t.integer('progress').notNullable().defaultTo(0);
		t.text('file_name');
		t.bigInteger('size_bytes');
		t.text('token_hash').unique('shop_exports_token_hash_unique');
		t.timestamp('finished_at', { useTz: true });
		t.timestamp('expires_at', { useTz: true });
		t.text('error');
		t.index(['shop_id', 'requested_at'], 'shop_exports_shop_idx');
	});
	await knex.raw(
		`alter table shop_exports add constraint shop_exports_status_check check (status in ('queued','running','done','failed'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('shop_exports');
}
