import type { Knex } from 'knex';

/** Who did what, when, in this shop: sign-ins, invitations, role changes, acknowledgements. */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('audit_log', (t) => {
		t.bigIncrements('id').primary();
		t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.bigInteger('actor_user_id');
		t.text('actor_email').notNullable().defaultTo('');
		t.text('action').notNullable();
		t.text('target').notNullable().defaultTo('');
		t.jsonb('detail').notNullable().defaultTo('{}');
		t.text('ip').notNullable().defaultTo('');
		t.index(['at'], 'audit_log_at_idx');
	});
	await knex.raw(
		`create trigger audit_log_append_only before update or delete on audit_log for each row execute function refuse_change()`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('audit_log');
}
