import type { Knex } from 'knex';

/**
 * A finding that comes back after being resolved is a new row with its own first-found time,
 * linked to the row it repeats (`previous_finding_id`). The key stays unique only among
 * unresolved rows, so resolved rows are kept as history of the same problem.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw('alter table findings drop constraint findings_key_unique');
	await knex.raw(
		"create unique index findings_key_live_unique on findings (key) where status <> 'resolved'"
	);
	await knex.raw('create index findings_key_idx on findings (key, resolved_at desc)');
	await knex.schema.alterTable('findings', (t) => {
		t.bigInteger('previous_finding_id')
			.references('id')
			.inTable('findings')
			.withKeyName('findings_previous_fk');
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('findings', (t) => {
		t.dropForeign(['previous_finding_id'], 'findings_previous_fk');
		t.dropColumn('previous_finding_id');
	});
	await knex.raw('drop index if exists findings_key_idx');
	await knex.raw('drop index if exists findings_key_live_unique');
	// Only the newest row of each key can stay when the key is unique again.
	await knex.raw(`delete from findings f using findings g
		where f.key = g.key and f.id < g.id`);
	await knex.raw('alter table findings add constraint findings_key_unique unique (key)');
}
