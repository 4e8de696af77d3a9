import type { Knex } from 'knex';

/**
 * Every upload of a program, kept: the text itself lives on disk under UPLOADS_DIR (never in
 * static/) so the background check can stream it; this row says where, how big and its SHA-256,
 * so a report names exactly which text was checked.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('program_versions', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('program_id').notNullable().references('programs.id').onDelete('CASCADE');
		/** 1, 2, 3… per program. */
		t.integer('version').notNullable();
		/** Path relative to UPLOADS_DIR, e.g. "shop_3/programs/7/v2-9f…c2.nc". */
		t.text('storage_key').notNullable();
		t.text('original_name').notNullable();
		t.bigInteger('byte_size').notNullable();
		t.integer('line_count').notNullable();
		/** Hex SHA-256 of the bytes as uploaded. */
		t.text('sha256').notNullable();
		t.bigInteger('uploaded_by');
		t.timestamp('uploaded_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['program_id', 'version'], { indexName: 'program_versions_version_unique' });
		t.unique(['storage_key'], { indexName: 'program_versions_storage_key_unique' });
	});
	await knex.raw(
		`alter table program_versions add constraint program_versions_sha256_check check (sha256 ~ '^[0-9a-f]{64}$')`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('program_versions');
}
