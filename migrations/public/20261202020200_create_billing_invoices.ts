import type { Knex } from 'knex';

/**
 * The shop's invoices as Stripe reported them in invoice.paid / invoice.payment_failed events,
 * for the billing page. `event_created_at` is the newest event that wrote the row, so a late,
 * older event cannot turn a paid invoice back to open.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('billing_invoices', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('shop_id')
			.notNullable()
			.references('shops.id')
			.withKeyName('billing_invoices_shop_id_foreign')
			.onDelete('CASCADE');
		t.text('stripe_invoice_id').notNullable().unique('billing_invoices_stripe_invoice_id_unique');
		t.text('number').notNullable().defaultTo('');
		t.text('status').notNullable();
		t.text('currency').notNullable();
		t.integer('amount_due').notNullable();
		t.integer('amount_paid').notNullable();
		t.timestamp('period_start', { useTz: true });
		t.timestamp('period_end', { useTz: true });
		t.text('hosted_url');
		t.timestamp('issued_at', { useTz: true }).notNullable();
		t.timestamp('event_created_at', { useTz: true }).notNullable();
		t.index(['shop_id', 'issued_at'], 'billing_invoices_shop_issued_idx');
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('billing_invoices');
}
