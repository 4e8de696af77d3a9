import type { Knex } from 'knex';

/**
 * Shop settings (issue 18): the units a new machine starts with, and the shop's own limits for
 * the offset checks (`check_policy`, the engine's PolicyInput: `units`, `jumpTolerance`,
 * `toolMaxAgeDays`, `workMaxAgeDays`; a missing field means the engine's default).
 * `time_zone` and `check_hour` already exist.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.text('default_units').notNullable().defaultTo('inch');
		t.jsonb('check_policy').notNullable().defaultTo('{}');
	});
	await knex.raw(
		`alter table shops add constraint shops_default_units_check check (default_units in ('inch','mm'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table shops drop constraint if exists shops_default_units_check');
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumns('default_units', 'check_policy');
	});
}
