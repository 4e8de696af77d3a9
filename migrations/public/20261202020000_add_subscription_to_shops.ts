import type { Knex } from 'knex';

/**
 * A shop's plan and subscription (billing). Every shop, new or existing (the demo shops too),
 * starts on a 14-day trial: `subscription_status` defaults to 'trialing' and `trial_ends_at` to
 * 14 days after the row is written (for existing rows: after this migration runs). The Stripe
 * columns are filled by checkout and webhooks; `billing_state_at` is the `created` time of the
 * newest Stripe event applied, so an older one arriving late is ignored.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.text('plan');
		t.text('subscription_status').notNullable().defaultTo('trialing');
		t.timestamp('trial_ends_at', { useTz: true })
			.notNullable()
			.defaultTo(knex.raw(`now() + interval '14 days'`));
		t.text('stripe_customer_id');
		t.text('stripe_subscription_id');
		t.timestamp('current_period_end', { useTz: true });
		t.boolean('cancel_at_period_end').notNullable().defaultTo(false);
		t.timestamp('past_due_since', { useTz: true });
		t.timestamp('billing_state_at', { useTz: true });
	});
	await knex.raw(`alter table shops
		add constraint shops_plan_check check (plan in ('bench','shop','floor')),
		add constraint shops_subscription_status_check
			check (subscription_status in ('trialing','active','past_due','canceled')),
		add constraint shops_stripe_customer_unique unique (stripe_customer_id),
		add constraint shops_stripe_subscription_unique unique (stripe_subscription_id)`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`alter table shops
		drop constraint shops_stripe_subscription_unique,
		drop constraint shops_stripe_customer_unique,
		drop constraint shops_subscription_status_check,
		drop constraint shops_plan_check`);
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumns(
			'plan',
			'subscription_status',
			'trial_ends_at',
			'stripe_customer_id',
			'stripe_subscription_id',
			'current_period_end',
			'cancel_at_period_end',
			'past_due_since',
			'billing_state_at'
		);
	});
}
