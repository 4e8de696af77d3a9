import type { Knex } from 'knex';

/**
 * A setup is what is on a machine's table for a job: its fixtures (with part-top and obstacle
 * heights above the reference, for clearance planes), its tools and its ops.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('setups', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		t.text('name').notNullable();
		t.text('job').notNullable().defaultTo('');
		t.text('status').notNullable().defaultTo('planned');
		/** Shop's margin above the tallest obstacle for the clearance plane. */
		t.decimal('clearance_margin', 12, 4).notNullable();
		t.bigInteger('created_by');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['machine_id'], 'setups_machine_idx');
	});
	await knex.raw(
		`alter table setups add constraint setups_status_check check (status in ('planned','running','done'))`
	);

	await knex.schema.createTable('setup_fixtures', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id').notNullable().references('setups.id').onDelete('CASCADE');
		t.bigInteger('fixture_id').notNullable().references('fixtures.id');
		/** Tallest thing on this fixture (clamp, jaw, part) above the reference. */
		t.decimal('obstacle_height', 12, 4).notNullable().defaultTo(0);
		t.unique(['setup_id', 'fixture_id'], { indexName: 'setup_fixtures_unique' });
	});

	await knex.schema.createTable('setup_tools', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id').notNullable().references('setups.id').onDelete('CASCADE');
		t.bigInteger('tool_id').notNullable().references('tools.id');
		t.unique(['setup_id', 'tool_id'], { indexName: 'setup_tools_unique' });
	});

	await knex.schema.createTable('setup_ops', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id').notNullable().references('setups.id').onDelete('CASCADE');
		t.integer('sequence').notNullable();
		t.text('name').notNullable();
		t.bigInteger('fixture_id').references('fixtures.id');
		t.text('notes').notNullable().defaultTo('');
		t.unique(['setup_id', 'sequence'], { indexName: 'setup_ops_sequence_unique' });
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('setup_ops');
	await knex.schema.dropTable('setup_tools');
	await knex.schema.dropTable('setup_fixtures');
	await knex.schema.dropTable('setups');
}
