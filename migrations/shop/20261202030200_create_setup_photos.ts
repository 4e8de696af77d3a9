import type { Knex } from 'knex';

/**
 * Photos of a setup (the table, a fixture, a clamp) for the setup sheet. The bytes live on
 * disk under UPLOADS_DIR (never in static/) and are served through a guarded route; this
 * table holds what is needed to find and describe them.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('setup_photos', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id').notNullable().references('setups.id').onDelete('CASCADE');
		/** Path relative to UPLOADS_DIR, e.g. "shop_3/setups/7/9f…c2.jpg". */
		t.text('storage_key').notNullable();
		t.text('original_name').notNullable();
		t.text('content_type').notNullable();
		t.integer('byte_size').notNullable();
		t.text('caption').notNullable().defaultTo('');
		t.bigInteger('uploaded_by');
		t.timestamp('uploaded_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['storage_key'], { indexName: 'setup_photos_storage_key_unique' });
		t.index(['setup_id'], 'setup_photos_setup_idx');
	});
	await knex.raw(
		`alter table setup_photos add constraint setup_photos_type_check check (content_type in ('image/jpeg','image/png','image/webp'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('setup_photos');
}
