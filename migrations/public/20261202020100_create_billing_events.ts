import type { Knex } from 'knex';

/**
 * Every Stripe webhook event the app accepted, by event id: the unique id makes delivery
 * idempotent (a replay finds its row and does nothing). `outcome` says what the event did:
 * applied, stale (older than the shop's billing state), or ignored (no shop, unknown plan, a
 * subscription that is not the shop's current one).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('billing_events', (t) => {
		t.bigIncrements('id').primary();
		t.text('stripe_event_id').notNullable().unique('billing_events_stripe_event_id_unique');
		t.text('type').notNullable();
		t.timestamp('event_created_at', { useTz: true }).notNullable();
		t.bigInteger('shop_id')
			.references('shops.id')
			.withKeyName('billing_events_shop_id_foreign')
			.onDelete('SET NULL');
		t.text('outcome').notNullable();
		t.text('note').notNullable().defaultTo('');
		t.jsonb('payload').notNullable();
		t.timestamp('received_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['shop_id', 'event_created_at'], 'billing_events_shop_created_idx');
	});
	await knex.raw(
		`alter table billing_events add constraint billing_events_outcome_check check (outcome in ('applied','stale','ignored'))`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('billing_events');
}
