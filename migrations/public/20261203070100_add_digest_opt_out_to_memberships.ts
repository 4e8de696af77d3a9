import type { Knex } from 'knex';

/**
 * A member's choice to stop the morning digest for this shop. Per membership, not
 * per user: a lead of two shops may want one shop's digest and not the other's.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('memberships', (t) => {
		t.boolean('digest_opt_out').notNullable().defaultTo(false);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('memberships', (t) => {
		t.dropColumn('digest_opt_out');
	});
}
