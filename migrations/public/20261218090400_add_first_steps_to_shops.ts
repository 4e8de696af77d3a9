import type { Knex } from 'knex';

/** When the shop's first-steps guide was put away (issue 18); null while it shows. */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.timestamp('first_steps_dismissed_at', { useTz: true });
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumn('first_steps_dismissed_at');
	});
}
