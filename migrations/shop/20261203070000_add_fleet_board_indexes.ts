import type { Knex } from 'knex';

/**
 * Indexes for the fleet board's set-based queries: the newest offset version of every
 * register across the shop (DISTINCT ON … ORDER BY created_at desc, id desc), the newest
 * reading per machine, and open findings counted per machine and severity.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw(
		'create index offset_versions_latest_idx on offset_versions (machine_id, register_kind, register, created_at desc, id desc)'
	);
	await knex.raw(
		"create index findings_unresolved_idx on findings (machine_id, severity) where status <> 'resolved'"
	);
	await knex.raw('create index findings_status_seen_idx on findings (status, last_seen_at desc)');
	await knex.raw(
		'create index setups_machine_status_idx on setups (machine_id, status, created_at desc)'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop index if exists setups_machine_status_idx');
	await knex.raw('drop index if exists findings_status_seen_idx');
	await knex.raw('drop index if exists findings_unresolved_idx');
	await knex.raw('drop index if exists offset_versions_latest_idx');
}
