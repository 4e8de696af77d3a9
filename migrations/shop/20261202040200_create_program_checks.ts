import type { Knex } from 'knex';

/**
 * A program check of one version against its setup: the setup as it stood when the check was
 * asked for (`input`, the engine's ProgramSetup), progress while it runs (the background worker
 * updates lines and bytes read) and the engine's result (findings + stats) when done.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('program_checks', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('version_id').notNullable().references('program_versions.id').onDelete('CASCADE');
		t.text('status').notNullable().defaultTo('queued');
		/** 'inline' (in the upload request) or 'background' (the worker). */
		t.text('mode').notNullable();
		t.jsonb('input').notNullable();
		t.integer('progress_lines').notNullable().defaultTo(0);
		t.bigInteger('progress_bytes').notNullable().defaultTo(0);
		/** { findings, stats } from the engine. */
		t.jsonb('result');
		t.integer('stops').notNullable().defaultTo(0);
		t.integer('cautions').notNullable().defaultTo(0);
		/** Why it failed or is waiting (e.g. the job queue could not be reached). */
		t.text('note').notNullable().defaultTo('');
		t.timestamp('queued_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('started_at', { useTz: true });
		t.timestamp('checked_at', { useTz: true });
		t.index(['version_id'], 'program_checks_version_idx');
	});
	await knex.raw(`alter table program_checks
		add constraint program_checks_status_check check (status in ('queued','running','done','failed')),
		add constraint program_checks_mode_check check (mode in ('inline','background'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('program_checks');
}
