import type { Knex } from 'knex';

/**
 * Every state change of a setup, with who and when. Append-only (the database refuses
 * updates and deletes), so a setup's story cannot be rewritten.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('setup_status_changes', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('setup_id').notNullable().references('setups.id');
		/** Null for the first entry (the setup was created or copied). */
		t.text('from_status');
		t.text('to_status').notNullable();
		t.bigInteger('changed_by');
		t.timestamp('changed_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.text('note').notNullable().defaultTo('');
		t.index(['setup_id', 'changed_at'], 'setup_status_changes_setup_idx');
	});
	await knex.raw(
		`alter table setup_status_changes add constraint setup_status_changes_to_check check (to_status in ('planned','on-machine','proven','closed'))`
	);
	await knex.raw(
		`create trigger setup_status_changes_append_only before update or delete on setup_status_changes for each row execute function refuse_change()`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('setup_status_changes');
}
