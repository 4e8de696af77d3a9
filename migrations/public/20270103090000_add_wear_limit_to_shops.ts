import type { Knex } from 'knex';

/**
 * The shop's wear limit (issue 20): the largest length or radius wear it lets stand before the
 * geometry is re-measured. Kept in one unit, millimetres (the column says so), to 5 decimals so
 * an inch limit is exact (0.0001 in = 0.00254 mm, NIST SP 811); shown and entered in the shop's
 * units. Null = our default per machine units (0.0100 in / 0.25 mm, shop policy).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.decimal('wear_limit_mm', 10, 5).nullable();
	});
	await knex.raw(
		'alter table shops add constraint shops_wear_limit_mm_range check (wear_limit_mm is null or wear_limit_mm between 0.001 and 2.54)'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table shops drop constraint if exists shops_wear_limit_mm_range');
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumn('wear_limit_mm');
	});
}
