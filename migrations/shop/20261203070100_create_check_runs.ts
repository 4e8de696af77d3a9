import type { Knex } from 'knex';

/**
 * One row per background offset check of the shop, keyed by the BullMQ job id so a
 * retried job updates its own row instead of adding one. The fleet board shows the newest;
 * "Check now" follows its own.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('check_runs', (t) => {
		t.bigIncrements('id').primary();
		t.text('job_id').notNullable().unique('check_runs_job_unique');
		/** 'nightly' (the shop's scheduled check) or 'manual' ("Check now"). */
		t.text('trigger').notNullable();
		t.bigInteger('requested_by');
		/** The instant the check judged the offsets at (fixed per job, so retries agree). */
		t.timestamp('checked_at', { useTz: true }).notNullable();
		t.timestamp('started_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('finished_at', { useTz: true });
		t.text('status').notNullable().defaultTo('running');
		t.integer('machines').notNullable().defaultTo(0);
		t.integer('opened').notNullable().defaultTo(0);
		t.integer('still_open').notNullable().defaultTo(0);
		t.integer('resolved').notNullable().defaultTo(0);
		t.text('error').notNullable().defaultTo('');
		t.index(['started_at'], 'check_runs_started_idx');
	});
	await knex.raw(`alter table check_runs
		add constraint check_runs_trigger_check check (trigger in ('nightly','manual')),
		add constraint check_runs_status_check check (status in ('running','done','failed'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('check_runs');
}
