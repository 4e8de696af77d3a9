import type { Knex } from 'knex';

/**
 * The local hour (0–23, in the shop's own time zone) at which the nightly offset check runs
 * for the shop (the nightly check and digest). Default 02:00: before the first shift, so the digest is waiting.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.smallint('check_hour').notNullable().defaultTo(2);
	});
	await knex.raw(
		'alter table shops add constraint shops_check_hour_range check (check_hour between 0 and 23)'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table shops drop constraint if exists shops_check_hour_range');
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumn('check_hour');
	});
}
