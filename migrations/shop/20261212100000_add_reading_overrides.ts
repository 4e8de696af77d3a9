import type { Knex } from 'knex';

/**
 * Overrides (DESIGN.md §7): a reading saved although the checks called its value Stop. The
 * reading keeps why (`override_reason`, required when anything was overridden) and what was
 * overridden (`overridden_findings`, the finding kinds). Readings stay append-only: these are
 * written with the row, never after.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('readings', (t) => {
		t.text('override_reason').notNullable().defaultTo('');
		t.specificType('overridden_findings', 'text[]').notNullable().defaultTo('{}');
	});
	await knex.raw(`alter table readings add constraint readings_override_reason check
		(cardinality(overridden_findings) = 0 or length(btrim(override_reason)) > 0)`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table readings drop constraint if exists readings_override_reason');
	await knex.schema.alterTable('readings', (t) => {
		t.dropColumn('overridden_findings');
		t.dropColumn('override_reason');
	});
}
