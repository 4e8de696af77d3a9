import type { Knex } from 'knex';

/** Work offset registers (one fixture each) and the tool rack, per machine. */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('fixtures', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** G54…G59 or "G54.1 P1"…"G54.1 P48". */
		t.text('register').notNullable();
		t.text('name').notNullable();
		t.text('description').notNullable().defaultTo('');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('archived_at', { useTz: true });
	});
	await knex.raw(
		'create unique index fixtures_machine_register_active on fixtures (machine_id, register) where archived_at is null'
	);
	await knex.raw(`alter table fixtures add constraint fixtures_register_check
		check (register ~ '^G5[4-9]$' or register ~ '^G54\\.1 P([1-9]|[1-3][0-9]|4[0-8])$')`);

	await knex.schema.createTable('tools', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		t.integer('t_number').notNullable();
		t.integer('h_number').notNullable();
		t.text('description').notNullable();
		t.text('holder').notNullable().defaultTo('');
		t.decimal('stickout', 12, 4);
		t.decimal('nominal_length', 12, 4);
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('archived_at', { useTz: true });
	});
	await knex.raw(
		'create unique index tools_machine_t_active on tools (machine_id, t_number) where archived_at is null'
	);
	await knex.raw('create index tools_machine_idx on tools (machine_id)');
	await knex.raw(`alter table tools
		add constraint tools_t_number_check check (t_number between 1 and 9999),
		add constraint tools_h_number_check check (h_number between 1 and 9999)`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('tools');
	await knex.schema.dropTable('fixtures');
}
