import type { Knex } from 'knex';
import Stripe from 'stripe';
import { afterAll, describe, expect, it } from 'vitest';
import { getShopBilling } from '$lib/server/billing/state';
import { handleStripeWebhook } from '$lib/server/billing/webhook';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';

/**
 * Hardening: the Stripe webhook resolves the shop from the stored customer and subscription
 * ids, never from an event's metadata against them. Before, a signed event for shop A's
 * customer carrying shop B's id in metadata changed shop B.
 */
const knex: Knex = testDb();
afterAll(() => knex.destroy());
const SECRET = 'whsec_integration_webhook_shop';
const T0 = Math.floor(Date.now() / 1000);

async function newShop(label: string) {
	const created = await createShopWithOwner(
		knex,
		{ name: `Hook ${label}`, slug: `hook-${label}-${uniqueSuffix()}` },
		{
			name: 'H Owner',
			email: `hook-${label}-${uniqueSuffix()}@example.test`,
			password: 'correct-horse-1'
		}
	);
	return created.shop;
}

async function deliver(type: string, object: Record<string, unknown>, created: number) {
	const payload = JSON.stringify({
		id: `evt_hook_${uniqueSuffix()}`,
		object: 'event',
		type,
		created,
		api_version: Stripe.API_VERSION,
		livemode: false,
		pending_webhooks: 1,
		request: { id: null, idempotency_key: null },
		data: { object }
	});
	const header = Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET });
	return handleStripeWebhook(knex, payload, header, SECRET);
}

const checkout = (shopId: number, customer: string, sub: string, plan = 'bench') => ({
	id: `cs_${uniqueSuffix()}`,
	object: 'checkout.session',
	mode: 'subscription',
	status: 'complete',
	payment_status: 'paid',
	customer,
	subscription: sub,
	client_reference_id: String(shopId),
	metadata: { shop_id: String(shopId), plan }
});

const subscription = (metaShop: number, customer: string, id: string, status: string) => ({
	id,
	object: 'subscription',
	customer,
	status,
	cancel_at_period_end: false,
	metadata: { shop_id: String(metaShop) },
	items: {
		object: 'list',
		data: [
			{
				id: `si_${id}`,
				price: { id: 'price_floor_monthly', lookup_key: null, metadata: {} },
				current_period_start: 1_800_000_000,
				current_period_end: 1_802_592_000
			}
		]
	}
});

describe('Stripe webhook: the shop comes from the stored Stripe ids', () => {
	it("an event for shop A's customer carrying shop B's id changes neither shop", async () => {
		const a = await newShop('a');
		const b = await newShop('b');
		const cusA = `cus_hook_${a.id}`;
		const subA = `sub_hook_${a.id}`;
		expect(
			(await deliver('checkout.session.completed', checkout(a.id, cusA, subA), T0)).body
		).toMatchObject({
			outcome: 'applied'
		});
		const bBefore = await getShopBilling(knex, b.id);
		const aBefore = await getShopBilling(knex, a.id);

		// Shop A's real subscription and customer, with shop B's id in metadata.
		const forged = await deliver(
			'customer.subscription.updated',
			subscription(b.id, cusA, subA, 'canceled'),
			T0 + 10
		);
		expect(forged.body).toMatchObject({ outcome: 'ignored' });
		expect(await getShopBilling(knex, b.id)).toEqual(bBefore);
		expect(await getShopBilling(knex, a.id)).toEqual(aBefore);
		const [row] = await knex('billing_events').orderBy('id', 'desc').limit(1).select('note');
		expect(row.note).toMatch(
			/^refused: metadata names shop \d+ but the Stripe ids belong to shop \d+/
		);

		// A checkout naming shop B with shop A's customer is refused too.
		const stolen = await deliver(
			'checkout.session.completed',
			checkout(b.id, cusA, `sub_hook_new_${b.id}`, 'floor'),
			T0 + 20
		);
		expect(stolen.body).toMatchObject({ outcome: 'ignored' });
		expect(await getShopBilling(knex, b.id)).toEqual(bBefore);
	});

	it('an event whose customer and subscription belong to different shops is refused', async () => {
		const a = await newShop('c');
		const b = await newShop('d');
		await deliver(
			'checkout.session.completed',
			checkout(a.id, `cus_c_${a.id}`, `sub_c_${a.id}`),
			T0
		);
		await deliver(
			'checkout.session.completed',
			checkout(b.id, `cus_d_${b.id}`, `sub_d_${b.id}`),
			T0
		);
		const before = await getShopBilling(knex, b.id);
		const mixed = await deliver(
			'customer.subscription.updated',
			subscription(b.id, `cus_c_${a.id}`, `sub_d_${b.id}`, 'past_due'),
			T0 + 30
		);
		expect(mixed.body).toMatchObject({ outcome: 'ignored' });
		expect(await getShopBilling(knex, b.id)).toEqual(before);
	});

	it("the shop's own events still apply (resolved by the stored ids)", async () => {
		const a = await newShop('e');
		const cus = `cus_e_${a.id}`;
		const sub = `sub_e_${a.id}`;
		await deliver('checkout.session.completed', checkout(a.id, cus, sub), T0);
		const ok = await deliver(
			'customer.subscription.updated',
			subscription(a.id, cus, sub, 'past_due'),
			T0 + 40
		);
		expect(ok.body).toMatchObject({ outcome: 'applied' });
		expect((await getShopBilling(knex, a.id)).status).toBe('past_due');
	});
});
