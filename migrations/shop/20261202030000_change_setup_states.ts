import type { Knex } from 'knex';

/**
 * Setups move planned → on-machine → proven → closed. Old values map across:
 * running → on-machine, done → closed.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw('alter table setups drop constraint setups_status_check');
	await knex('setups').where({ status: 'running' }).update({ status: 'on-machine' });
	await knex('setups').where({ status: 'done' }).update({ status: 'closed' });
	await knex.raw(
		`alter table setups add constraint setups_status_check check (status in ('planned','on-machine','proven','closed'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table setups drop constraint setups_status_check');
	await knex('setups').where({ status: 'on-machine' }).update({ status: 'running' });
	await knex('setups').where({ status: 'proven' }).update({ status: 'running' });
	await knex('setups').where({ status: 'closed' }).update({ status: 'done' });
	await knex.raw(
		`alter table setups add constraint setups_status_check check (status in ('planned','running','done'))`
	);
}
