import type { Knex } from 'knex';

/**
 * Readings (one recorded machine coordinate each) and the offset versions computed from them.
 * Both are append-only, enforced here by the database: a wrong reading is corrected by a newer
 * one that points at it (`corrects_reading_id`) with a reason, never by an edit.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('readings', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		t.text('kind').notNullable();
		t.bigInteger('tool_id').references('tools.id');
		t.bigInteger('fixture_id').references('fixtures.id');
		/** The raw machine-coordinate Z the operator read off the control. */
		t.decimal('machine_z', 12, 4).notNullable();
		/** Height of a setter or block between the tip and the surface (subtracted). */
		t.decimal('block_height', 12, 4).notNullable().defaultTo(0);
		t.text('instrument').notNullable().defaultTo('');
		t.integer('reference_version').notNullable();
		t.bigInteger('corrects_reading_id').references('readings.id');
		t.boolean('tool_changed').notNullable().defaultTo(false);
		t.text('reason').notNullable().defaultTo('');
		t.bigInteger('taken_by');
		t.timestamp('taken_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['machine_id', 'taken_at'], 'readings_machine_taken_idx');
	});
	await knex.raw(`alter table readings
		add constraint readings_kind_check check (kind in ('tool-touch','part-top','reference','tool-remeasure')),
		add constraint readings_correction_reason check (corrects_reading_id is null or length(reason) > 0)`);

	await knex.schema.createTable('offset_versions', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** 'work' (a fixture's register) or 'tool' (an H number). */
		t.text('register_kind').notNullable();
		/** "G54", "G54.1 P3", or the H number as text ("12"). */
		t.text('register').notNullable();
		t.decimal('value', 12, 4).notNullable();
		t.text('units').notNullable();
		t.text('convention').notNullable();
		t.bigInteger('reading_id').references('readings.id');
		t.integer('reference_version').notNullable();
		t.bigInteger('created_by');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(
			['machine_id', 'register_kind', 'register', 'created_at'],
			'offset_versions_register_idx'
		);
	});
	await knex.raw(
		`alter table offset_versions add constraint offset_versions_kind_check check (register_kind in ('work','tool'))`
	);

	// Append-only, for every role including the app's own: updates and deletes raise.
	await knex.raw(`create or replace function refuse_change() returns trigger language plpgsql as $$
		begin
			raise exception '% rows are append-only: record a correction instead', tg_table_name
				using errcode = 'check_violation';
		end $$`);
	for (const table of ['readings', 'offset_versions', 'reference_surfaces']) {
		await knex.raw(
			`create trigger ${table}_append_only before update or delete on ?? for each row execute function refuse_change()`,
			[table]
		);
		await knex.raw(
			`create trigger ${table}_no_truncate before truncate on ?? execute function refuse_change()`,
			[table]
		);
	}
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('offset_versions');
	await knex.schema.dropTable('readings');
	for (const table of ['reference_surfaces']) {
		await knex.raw(`drop trigger if exists ${table}_append_only on ??`, [table]);
		await knex.raw(`drop trigger if exists ${table}_no_truncate on ??`, [table]);
	}
	await knex.raw('drop function if exists refuse_change()');
}
