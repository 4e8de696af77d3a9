import type { Knex } from 'knex';
import Stripe from 'stripe';
import { afterAll, describe, expect, it } from 'vitest';
import { assertCanAddMachine, assertCanAddSetup } from '$lib/server/billing/gate';
import { getShopBilling } from '$lib/server/billing/state';
import { handleStripeWebhook } from '$lib/server/billing/webhook';
import { withShop } from '$lib/server/db/tenant';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';
import { mailsTo } from './mail';

/**
 * Billing against the real PostgreSQL: webhook events signed exactly as Stripe (and the fake)
 * sign them, through the same entry point the route uses, and the machine gate.
 */
const knex: Knex = testDb();
afterAll(() => knex.destroy());

const SECRET = 'whsec_integration_billing';
type Shop = { id: number; schemaName: string; slug: string; name: string };

async function newShop(label: string): Promise<{ shop: Shop; owner: string; admin: string }> {
	const owner = `billing-owner-${uniqueSuffix()}@example.test`;
	const admin = `billing-admin-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: `Billing ${label}`, slug: `billing-${label}-${uniqueSuffix()}` },
		{ name: 'Bo Owner', email: owner, password: 'correct-horse-1' }
	);
	const [u] = await knex('users').insert({ email: admin, name: 'Ada Admin' }).returning('id');
	await knex('memberships').insert({ user_id: u.id, shop_id: created.shop.id, role: 'admin' });
	return { shop: created.shop, owner, admin };
}

let seq = 0;
const evtId = () => `evt_it_${uniqueSuffix()}_${++seq}`;

function event(type: string, object: Record<string, unknown>, created: number) {
	return {
		id: evtId(),
		object: 'event',
		type,
		created,
		api_version: Stripe.API_VERSION,
		livemode: false,
		pending_webhooks: 1,
		request: { id: null, idempotency_key: null },
		data: { object }
	};
}

function subscription(
	shop: Shop,
	id: string,
	over: { status?: string; price?: string; cancel_at_period_end?: boolean } = {}
) {
	return {
		id,
		object: 'subscription',
		customer: `cus_${shop.id}`,
		status: over.status ?? 'active',
		cancel_at_period_end: over.cancel_at_period_end ?? false,
		metadata: { shop_id: String(shop.id) },
		items: {
			object: 'list',
			data: [
				{
					id: `si_${id}`,
					price: { id: over.price ?? 'price_bench_monthly', lookup_key: null, metadata: {} },
					current_period_start: 1_800_000_000,
					current_period_end: 1_802_592_000
				}
			]
		}
	};
}

function invoice(shop: Shop, sub: string, id: string, status: 'paid' | 'open') {
	return {
		id,
		object: 'invoice',
		customer: `cus_${shop.id}`,
		status,
		number: `DKF-${id.slice(-4)}`,
		currency: 'usd',
		amount_due: 4900,
		amount_paid: status === 'paid' ? 4900 : 0,
		created: 1_800_000_000,
		period_start: 1_800_000_000,
		period_end: 1_802_592_000,
		hosted_invoice_url: `http://127.0.0.1:12121/invoices/${id}`,
		parent: {
			type: 'subscription_details',
			subscription_details: { subscription: sub, metadata: { shop_id: String(shop.id) } }
		}
	};
}

function checkoutCompleted(shop: Shop, sub: string, plan: string, created: number) {
	return event(
		'checkout.session.completed',
		{
			id: `cs_test_${uniqueSuffix()}`,
			object: 'checkout.session',
			mode: 'subscription',
			status: 'complete',
			payment_status: 'paid',
			customer: `cus_${shop.id}`,
			subscription: sub,
			client_reference_id: String(shop.id),
			metadata: { shop_id: String(shop.id), plan }
		},
		created
	);
}

/** Delivers an event as Stripe would: the exact bytes, signed with the shared secret. */
async function deliver(evt: object, secret = SECRET) {
	const payload = JSON.stringify(evt, null, 2);
	const header = Stripe.webhooks.generateTestHeaderString({ payload, secret });
	return handleStripeWebhook(knex, payload, header, SECRET);
}

const auditActions = (shop: Shop) =>
	withShop(shop, (trx) => trx('audit_log').orderBy('id').pluck('action'), knex);

const T0 = Math.floor(Date.now() / 1000);

describe('trial', () => {
	it('starts every new shop on a 14-day trial with no plan', async () => {
		const { shop } = await newShop('trial');
		const b = await getShopBilling(knex, shop.id);
		expect(b.status).toBe('trialing');
		expect(b.plan).toBeNull();
		const days = (b.trialEndsAt.getTime() - Date.now()) / 86_400_000;
		expect(days).toBeGreaterThan(13.9);
		expect(days).toBeLessThanOrEqual(14);
	});
});

describe('webhook signature', () => {
	it('answers 400 to a bad or missing signature and changes nothing', async () => {
		const { shop } = await newShop('badsig');
		const before = await getShopBilling(knex, shop.id);
		const evt = checkoutCompleted(shop, `sub_bad_${shop.id}`, 'bench', T0);

		const wrongSecret = await deliver(evt, 'whsec_someone_else');
		expect(wrongSecret.status).toBe(400);
		expect(String(wrongSecret.body.error)).toMatch(/Signature check failed/);

		const payload = JSON.stringify(evt);
		const header = Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET });
		const tampered = payload.replace('"bench"', '"floor"');
		expect((await handleStripeWebhook(knex, tampered, header, SECRET)).status).toBe(400);
		expect((await handleStripeWebhook(knex, payload, null, SECRET)).status).toBe(400);

		expect(await knex('billing_events').where({ stripe_event_id: evt.id }).first()).toBeUndefined();
		expect(await getShopBilling(knex, shop.id)).toEqual(before);
		expect(await auditActions(shop)).toEqual(['shop.created']);

		// The same event, correctly signed, is then accepted: the 400s were about the signature.
		expect((await deliver(evt)).status).toBe(200);
		expect((await getShopBilling(knex, shop.id)).status).toBe('active');
	});
});

describe('webhook events', () => {
	it('checkout completed: the shop is active on the chosen plan, audited', async () => {
		const { shop } = await newShop('checkout');
		const answer = await deliver(checkoutCompleted(shop, `sub_co_${shop.id}`, 'shop', T0));
		expect(answer).toMatchObject({ status: 200, body: { outcome: 'applied', duplicate: false } });
		const b = await getShopBilling(knex, shop.id);
		expect(b).toMatchObject({
			status: 'active',
			plan: 'shop',
			stripeSubscriptionId: `sub_co_${shop.id}`,
			stripeCustomerId: `cus_${shop.id}`
		});
		expect(await auditActions(shop)).toEqual(
			expect.arrayContaining([
				'billing.plan-changed',
				'billing.status-changed',
				'billing.subscribed'
			])
		);
	});

	it('a replayed event has no second effect (state, audit, e-mail, events table)', async () => {
		const { shop, owner, admin } = await newShop('replay');
		const sub = `sub_rp_${shop.id}`;
		await deliver(checkoutCompleted(shop, sub, 'bench', T0));
		const failed = event(
			'invoice.payment_failed',
			invoice(shop, sub, `in_rp_${shop.id}`, 'open'),
			T0 + 10
		);

		const first = await deliver(failed);
		expect(first.body).toMatchObject({ outcome: 'applied', duplicate: false });
		const afterFirst = await getShopBilling(knex, shop.id);
		expect(afterFirst.status).toBe('past_due');
		const audits = await auditActions(shop);
		const mailsOwner = (await mailsTo(owner)).length;
		expect(mailsOwner).toBe(1);
		expect((await mailsTo(admin))[0].subject).toMatch(/Payment failed for Billing replay/);

		const second = await deliver(failed);
		expect(second).toMatchObject({ status: 200, body: { outcome: 'applied', duplicate: true } });
		expect(await getShopBilling(knex, shop.id)).toEqual(afterFirst);
		expect(await auditActions(shop)).toEqual(audits);
		expect((await mailsTo(owner)).length).toBe(1);
		expect(await knex('billing_events').where({ stripe_event_id: failed.id })).toHaveLength(1);
		const mailLog = await knex('email_log').where({
			shop_id: shop.id,
			kind: 'billing.payment-failed'
		});
		expect(mailLog).toHaveLength(2); // owner and admin, once each
	});

	it('an out-of-order (older) update is ignored and recorded as stale', async () => {
		const { shop } = await newShop('order');
		const sub = `sub_oo_${shop.id}`;
		await deliver(checkoutCompleted(shop, sub, 'bench', T0));
		const older = event(
			'customer.subscription.updated',
			subscription(shop, sub, { price: 'price_shop_monthly' }),
			T0 + 10
		);
		const newer = event(
			'customer.subscription.updated',
			subscription(shop, sub, { price: 'price_floor_monthly' }),
			T0 + 20
		);
		expect((await deliver(newer)).body.outcome).toBe('applied');
		expect((await deliver(older)).body.outcome).toBe('stale');
		const b = await getShopBilling(knex, shop.id);
		expect(b.plan).toBe('floor');
		expect(b.stateAt?.getTime()).toBe((T0 + 20) * 1000);
		const row = await knex('billing_events').where({ stripe_event_id: older.id }).first();
		expect(row).toMatchObject({ outcome: 'stale', shop_id: String(shop.id) });
	});

	it('payment recovered → active; deleted → cancelled, data kept, other subscriptions ignored', async () => {
		const { shop } = await newShop('lifecycle');
		const sub = `sub_lc_${shop.id}`;
		await deliver(checkoutCompleted(shop, sub, 'bench', T0));
		await deliver(
			event('invoice.payment_failed', invoice(shop, sub, `in_lc_${shop.id}`, 'open'), T0 + 5)
		);
		await deliver(event('invoice.paid', invoice(shop, sub, `in_lc_${shop.id}`, 'paid'), T0 + 6));
		let b = await getShopBilling(knex, shop.id);
		expect(b).toMatchObject({ status: 'active', pastDueSince: null });
		const inv = await knex('billing_invoices').where({ stripe_invoice_id: `in_lc_${shop.id}` });
		expect(inv).toHaveLength(1);
		expect(inv[0].status).toBe('paid');

		const stranger = await deliver(
			event(
				'customer.subscription.deleted',
				subscription(shop, 'sub_not_this_one', { status: 'canceled' }),
				T0 + 7
			)
		);
		expect(stranger.body.outcome).toBe('ignored');
		expect((await getShopBilling(knex, shop.id)).status).toBe('active');

		await deliver(
			event(
				'customer.subscription.deleted',
				subscription(shop, sub, { status: 'canceled' }),
				T0 + 8
			)
		);
		b = await getShopBilling(knex, shop.id);
		expect(b.status).toBe('canceled');
		expect(b.plan).toBe('bench');
		expect(await assertCanAddSetup(knex, shop)).toMatchObject({ ok: false });
		expect(await auditActions(shop)).toContain('billing.payment-failed');
	});
});

describe('plan limit on the server', () => {
	async function addMachines(shop: Shop, names: string[]) {
		await withShop(
			shop,
			(trx) =>
				trx('machines').insert(
					names.map((name) => ({ name, units: 'inch', z_travel: 20, resolution: 0.0001 }))
				),
			knex
		);
	}

	it('refuses the third machine on the Bench plan (2), naming the limit and the way to raise it', async () => {
		const { shop } = await newShop('limit');
		await deliver(checkoutCompleted(shop, `sub_lim_${shop.id}`, 'bench', T0));
		await addMachines(shop, ['Mill A']);
		expect(await assertCanAddMachine(knex, shop)).toEqual({ ok: true });
		await addMachines(shop, ['Mill B']);
		const refused = await assertCanAddMachine(knex, shop);
		expect(refused.ok).toBe(false);
		if (refused.ok) return;
		expect(refused.message).toMatch(/Bench plan allows 2 machines/);
		expect(refused.message).toMatch(/Billing page/);
		expect(refused.message).toMatch(/Shop: 10 machines/);

		// Inside the inserting transaction too (the shop row is locked there).
		const inTrx = await knex.transaction((trx) => assertCanAddMachine(trx, shop));
		expect(inTrx.ok).toBe(false);

		// Archived machines do not count.
		await withShop(
			shop,
			(trx) => trx('machines').where({ name: 'Mill B' }).update({ archived_at: new Date() }),
			knex
		);
		expect(await assertCanAddMachine(knex, shop)).toEqual({ ok: true });
	});

	it('refuses new machines once past due beyond the grace period, but not within it', async () => {
		const { shop } = await newShop('grace');
		const sub = `sub_gr_${shop.id}`;
		await deliver(checkoutCompleted(shop, sub, 'floor', T0));
		await deliver(
			event('invoice.payment_failed', invoice(shop, sub, `in_gr_${shop.id}`, 'open'), T0 + 1)
		);
		expect(await assertCanAddMachine(knex, shop)).toEqual({ ok: true });
		await knex('shops')
			.where({ id: shop.id })
			.update({ past_due_since: new Date(Date.now() - 8 * 86_400_000) });
		const refused = await assertCanAddMachine(knex, shop);
		expect(refused).toMatchObject({ ok: false });
		expect(!refused.ok && refused.message).toMatch(/overdue.*grace period.*Nothing is lost/);
	});
});
