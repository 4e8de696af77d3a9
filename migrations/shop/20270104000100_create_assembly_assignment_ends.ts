import type { Knex } from 'knex';

/**
 * An assembly is in one place at a time (issue 20): putting it in another pocket ends its
 * previous assignment, and a pocket that gets another assembly ends the one it held. Assignments
 * stay append-only; the end is its own append-only row (when, by whom, why, and the assignment
 * that replaced it), so "where it is now" is the assignment with no end and "where it was" is
 * every other one, with dates.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('assembly_assignment_ends', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('assignment_id').notNullable().references('assembly_assignments.id').unique();
		/** The assignment that took its place (the assembly moved, or the pocket got another). */
		t.bigInteger('replaced_by').references('assembly_assignments.id');
		t.text('reason').notNullable();
		t.bigInteger('ended_by');
		t.timestamp('ended_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(`alter table assembly_assignment_ends add constraint assembly_assignment_ends_reason_check
		check (reason in ('moved', 'replaced'))`);
	await knex.raw(
		'create trigger assembly_assignment_ends_append_only before update or delete on assembly_assignment_ends for each row execute function refuse_change()'
	);
	await knex.raw(
		'create trigger assembly_assignment_ends_no_truncate before truncate on assembly_assignment_ends execute function refuse_change()'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('assembly_assignment_ends');
}
