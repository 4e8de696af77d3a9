import type { Knex } from 'knex';

/**
 * Sign-off of a setup (DESIGN.md §7): offsets entered by, verified at the control by, first part
 * checked by, each with a date. A setup becomes "proven" only with one. Append-only: a new
 * sign-off is a new row (the newest counts).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('setup_signoffs', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id')
			.notNullable()
			.references('setups.id')
			.withKeyName('setup_signoffs_setup_fk');
		t.text('entered_by').notNullable();
		t.date('entered_on').notNullable();
		t.text('verified_by').notNullable();
		t.date('verified_on').notNullable();
		t.text('first_part_by').notNullable();
		t.date('first_part_on').notNullable();
		t.text('note').notNullable().defaultTo('');
		t.bigInteger('recorded_by');
		t.timestamp('recorded_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['setup_id', 'recorded_at'], 'setup_signoffs_setup_idx');
	});
	await knex.raw(
		'create trigger setup_signoffs_append_only before update or delete on setup_signoffs for each row execute function refuse_change()'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('setup_signoffs');
}
