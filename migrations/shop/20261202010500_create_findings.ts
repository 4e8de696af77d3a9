import type { Knex } from 'knex';

/**
 * Findings from the checks (DESIGN.md §3). `key` names the problem (kind + subject), so a check
 * that runs again updates the same row instead of adding a duplicate.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('findings', (t) => {
		t.bigIncrements('id').primary();
		t.text('key').notNullable().unique('findings_key_unique');
		t.bigInteger('machine_id').references('machines.id');
		t.text('kind').notNullable();
		t.text('severity').notNullable();
		t.text('subject_type').notNullable();
		t.text('subject').notNullable();
		t.text('message').notNullable();
		t.text('status').notNullable().defaultTo('open');
		t.timestamp('first_seen_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('last_seen_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.bigInteger('acknowledged_by');
		t.timestamp('acknowledged_at', { useTz: true });
		t.bigInteger('resolved_by');
		t.timestamp('resolved_at', { useTz: true });
		t.text('comment').notNullable().defaultTo('');
		t.index(['machine_id', 'status'], 'findings_machine_status_idx');
	});
	await knex.raw(`alter table findings
		add constraint findings_severity_check check (severity in ('caution','stop')),
		add constraint findings_status_check check (status in ('open','acknowledged','resolved'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('findings');
}
