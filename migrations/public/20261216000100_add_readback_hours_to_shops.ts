import type { Knex } from 'knex';

/**
 * Shop policy for read-backs (issue 16): hours after an offset changes in Datumkeep before the
 * shop check says it was "not verified at the control". Default 8 (our default: one shift).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.smallint('readback_hours').notNullable().defaultTo(8);
	});
	await knex.raw(
		'alter table shops add constraint shops_readback_hours_range check (readback_hours between 1 and 720)'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table shops drop constraint if exists shops_readback_hours_range');
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumn('readback_hours');
	});
}
