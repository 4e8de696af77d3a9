import type { Knex } from 'knex';
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFakeStripe, type FakeStripe } from '../../fakes/stripe';
import { billingBanner } from '$lib/server/billing/banner';
import { assertCanAddMachine, countActiveMachines } from '$lib/server/billing/gate';
import { billingOverview, choosePlan, openPortal } from '$lib/server/billing/service';
import { getShopBilling } from '$lib/server/billing/state';
import { handleStripeWebhook } from '$lib/server/billing/webhook';
import { withShop } from '$lib/server/db/tenant';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';

/**
 * Billing edges (issue 18) through the app's own code and the project's fake Stripe, started
 * here on a free port: the SDK talks to it, its pages are posted as a browser would, and the
 * events it produces are signed and handed to the same webhook entry point the route uses.
 */
const knex: Knex = testDb();
const SECRET = 'whsec_integration_billing_edges';
let fake: FakeStripe;

beforeAll(async () => {
	fake = await startFakeStripe({ port: 0 });
	// This file's own fake: the SDK client is made on first use, after these are set.
	process.env.STRIPE_API_HOST = '127.0.0.1';
	process.env.STRIPE_API_PORT = String(fake.port);
	process.env.STRIPE_API_PROTOCOL = 'http';
	process.env.STRIPE_SECRET_KEY ||= 'sk_test_local_fake';
});
afterAll(async () => {
	await fake?.close();
	await knex.destroy();
});

type Shop = { id: number; schemaName: string; slug: string; name: string };
let delivered = 0;

async function newShop(label: string) {
	const email = `edges-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: `Edges ${label}`, slug: `edges-${label}-${uniqueSuffix()}` },
		{ name: 'Eda Owner', email, password: 'correct-horse-1' }
	);
	const [u] = await knex('users').where({ email }).pluck('id');
	return { shop: created.shop as Shop, by: { id: Number(u), email } };
}

/** Hands every event the fake produced since the last call to the webhook, signed. */
async function deliverNew() {
	await fake.idle();
	const records = fake.events().slice(delivered);
	delivered += records.length;
	for (const r of records) {
		const payload = JSON.stringify(r.event);
		const header = Stripe.webhooks.generateTestHeaderString({ payload, secret: SECRET });
		const answer = await handleStripeWebhook(knex, payload, header, SECRET);
		expect(answer.status).toBe(200);
	}
}

/** Pays the stand-in checkout page with the good test card. */
async function pay(url: string) {
	const res = await fetch(url.replace(fake.publicUrl, fake.url), {
		method: 'POST',
		headers: { 'content-type': 'application/x-www-form-urlencoded' },
		body: 'card_number=4242+4242+4242+4242',
		redirect: 'manual'
	});
	expect([302, 303]).toContain(res.status);
}

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

describe('paying during the trial', () => {
	it('keeps the trial to its end (Stripe trial_end) and says what is charged when', async () => {
		const { shop, by } = await newShop('trial');
		const before = await getShopBilling(knex, shop.id);
		const trialEnd = Math.floor(before.trialEndsAt.getTime() / 1000);
		const overview0 = await billingOverview(knex, shop);
		expect(overview0.keepsTrialUntil).toBe(before.trialEndsAt.toISOString());

		const chosen = await choosePlan(knex, { ...shop }, 'shop', by, 'http://app.test');
		expect(chosen.kind).toBe('checkout');
		if (chosen.kind !== 'checkout') return;
		await pay(chosen.url);
		await deliverNew();

		// Stripe's side: the subscription is still in its trial, ending when the shop's trial ends,
		// and nothing has been charged.
		const sub = [...fake.state.subscriptions.values()].find(
			(s) => s.metadata.shop_id === String(shop.id)
		)!;
		expect(sub.status).toBe('trialing');
		expect(sub.trial_end).toBe(trialEnd);
		expect(sub.items.data[0].current_period_end).toBe(trialEnd);
		const charged = [...fake.state.invoices.values()]
			.filter((i) => i.customer === sub.customer)
			.reduce((sum, i) => sum + i.amount_paid, 0);
		expect(charged).toBe(0);

		// Ours: on the Shop plan, the trial end unchanged, the first charge on the trial's last day.
		const after = await getShopBilling(knex, shop.id);
		expect(after.plan).toBe('shop');
		expect(after.trialEndsAt.getTime()).toBe(before.trialEndsAt.getTime());
		const overview = await billingOverview(knex, shop);
		expect(overview.nextCharge).toEqual({
			cents: 14900,
			currency: 'usd',
			on: new Date(trialEnd * 1000).toISOString(),
			afterTrial: true
		});
		expect(overview.keepsTrialUntil).toBeNull();
	});

	it('charges at once when the trial has under two days left (Stripe refuses a nearer trial_end)', async () => {
		const { shop, by } = await newShop('late');
		await knex('shops')
			.where({ id: shop.id })
			.update({ trial_ends_at: new Date(Date.now() + 86_400_000) });
		expect((await billingOverview(knex, shop)).keepsTrialUntil).toBeNull();
		const chosen = await choosePlan(knex, { ...shop }, 'bench', by, 'http://app.test');
		if (chosen.kind !== 'checkout') throw new Error(chosen.kind);
		await pay(chosen.url);
		await deliverNew();
		const sub = [...fake.state.subscriptions.values()].find(
			(s) => s.metadata.shop_id === String(shop.id)
		)!;
		expect(sub.status).toBe('active');
		expect(sub.trial_end).toBeNull();
		const paid = [...fake.state.invoices.values()].filter((i) => i.customer === sub.customer);
		expect(paid.map((i) => i.amount_paid)).toEqual([4900]);
		expect((await billingOverview(knex, shop)).nextCharge?.afterTrial).toBe(false);
	});
});

describe('downgrade below the machines in use (billing portal)', () => {
	it('keeps every machine readable, refuses new ones, and tells owners and admins only', async () => {
		const { shop, by } = await newShop('down');
		await knex('shops')
			.where({ id: shop.id })
			.update({ trial_ends_at: new Date(Date.now() + 86_400_000) });
		const chosen = await choosePlan(knex, { ...shop }, 'shop', by, 'http://app.test');
		if (chosen.kind !== 'checkout') throw new Error(chosen.kind);
		await pay(chosen.url);
		await deliverNew();
		await addMachines(shop, ['Mill 1', 'Mill 2', 'Mill 3', 'Mill 4']);

		// The owner switches to Bench (2 machines) in the portal, which does not check our count.
		const portal = await openPortal(knex, { ...shop }, 'overview', by, 'http://app.test');
		if (!portal.ok) throw new Error(portal.message);
		const sub = [...fake.state.subscriptions.values()].find(
			(s) => s.metadata.shop_id === String(shop.id)
		)!;
		const res = await fetch(`${portal.url.replace(fake.publicUrl, fake.url)}/switch`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded' },
			body: `subscription=${sub.id}&price=price_bench_monthly`,
			redirect: 'manual'
		});
		expect(res.status).toBeLessThan(400);
		await deliverNew();

		const billing = await getShopBilling(knex, shop.id);
		expect(billing.plan).toBe('bench');
		expect(billing.status).toBe('active');
		// Nothing hidden, archived or deleted.
		const machines = await withShop(shop, (trx) => trx('machines').orderBy('name').select(), knex);
		expect(machines.map((m) => m.name)).toEqual(['Mill 1', 'Mill 2', 'Mill 3', 'Mill 4']);
		expect(machines.every((m) => m.archived_at === null)).toBe(true);
		expect(await countActiveMachines(shop, knex)).toBe(4);
		// Adding is refused, naming the plan's limit.
		const gate = await assertCanAddMachine(knex, shop);
		expect(gate.ok).toBe(false);
		if (!gate.ok)
			expect(gate.message).toMatch(/Bench plan allows 2 machines and this shop already has 4/);
		// The banner for owners and admins says so.
		const banner = billingBanner(billing, true, new Date(), { machinesInUse: 4 });
		expect(banner).toMatchObject({ label: 'Over the plan' });
		expect(banner?.text).toMatch(/4 active machines and the Bench plan allows 2/);
		// Back within the limit (two archived), adding is allowed again and the banner goes.
		await withShop(
			shop,
			(trx) =>
				trx('machines').whereIn('name', ['Mill 3', 'Mill 4']).update({ archived_at: new Date() }),
			knex
		);
		expect(billingBanner(billing, true, new Date(), { machinesInUse: 2 })).toBeNull();
	});
});
