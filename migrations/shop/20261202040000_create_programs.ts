import type { Knex } from 'knex';

/**
 * A G-code program uploaded to a setup for the program check (DESIGN.md §3). One row per name
 * per setup; every upload under that name is a new version (program_versions).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('programs', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id').notNullable().references('setups.id').onDelete('CASCADE');
		/** As the shop calls it, e.g. "O1001 pump housing A-B" (the file name without extension by default). */
		t.text('name').notNullable();
		t.bigInteger('created_by');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.unique(['setup_id', 'name'], { indexName: 'programs_setup_name_unique' });
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('programs');
}
