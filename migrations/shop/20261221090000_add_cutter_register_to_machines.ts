import type { Knex } from 'knex';

/**
 * Whether a machine's control keeps its cutter compensation registers (D) as a radius or as a
 * diameter (issue 20): a machine setting, since it decides what the radius geometry and wear
 * registers hold and how a measured side wall turns into a wear change.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('machines', (t) => {
		t.text('cutter_register').notNullable().defaultTo('radius');
	});
	await knex.raw(`alter table machines add constraint machines_cutter_register_check
		check (cutter_register in ('radius', 'diameter'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table machines drop constraint if exists machines_cutter_register_check');
	await knex.schema.alterTable('machines', (t) => t.dropColumn('cutter_register'));
}
