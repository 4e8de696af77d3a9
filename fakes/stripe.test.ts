import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import Stripe from 'stripe';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { startFakeStripe, type FakeStripe } from './stripe';

const SECRET = 'whsec_fake_stripe_test';
const PRICES = [
	{
		id: 'price_small',
		productName: 'Small',
		unit_amount: 2900,
		interval: 'month' as const,
		metadata: { machine_limit: '2' }
	},
	{
		id: 'price_large',
		productName: 'Large',
		unit_amount: 9900,
		interval: 'month' as const,
		metadata: { machine_limit: '10' }
	}
];

/** What the tiny webhook receiver saw: only events whose signature the SDK verified. */
interface Received {
	event: Stripe.Event;
	signature: string;
}

/** A stand-in for the app's webhook route: verifies with the SDK, answers per `nextStatuses`. */
function startReceiver(): Promise<{
	server: Server;
	url: string;
	received: Received[];
	rejected: number[];
	nextStatuses: number[];
}> {
	const received: Received[] = [];
	const rejected: number[] = [];
	const nextStatuses: number[] = [];
	const server = createServer((req, res) => {
		const chunks: Buffer[] = [];
		req.on('data', (c: Buffer) => chunks.push(c));
		req.on('end', () => {
			const status = nextStatuses.shift() ?? 200;
			if (status !== 200) {
				rejected.push(status);
				res.writeHead(status).end();
				return;
			}
			const signature = String(req.headers['stripe-signature'] ?? '');
			try {
				const event = Stripe.webhooks.constructEvent(Buffer.concat(chunks), signature, SECRET);
				received.push({ event, signature });
				res.writeHead(200).end('{"received":true}');
			} catch {
				rejected.push(400);
				res.writeHead(400).end();
			}
		});
	});
	return new Promise((resolve) =>
		server.listen(0, '127.0.0.1', () =>
			resolve({
				server,
				url: `http://127.0.0.1:${(server.address() as AddressInfo).port}/api/v1/stripe/webhook`,
				received,
				rejected,
				nextStatuses
			})
		)
	);
}

describe('fake Stripe with the real Stripe SDK', () => {
	let fake: FakeStripe;
	let stripe: Stripe;
	let receiver: Awaited<ReturnType<typeof startReceiver>>;

	beforeAll(async () => {
		receiver = await startReceiver();
		fake = await startFakeStripe({
			port: 0,
			webhookUrl: receiver.url,
			webhookSecret: SECRET,
			prices: PRICES,
			webhookRetryBaseMs: 20
		});
		stripe = new Stripe('sk_test_fake', {
			host: '127.0.0.1',
			port: fake.port,
			protocol: 'http',
			maxNetworkRetries: 0
		});
	});

	afterAll(async () => {
		await fake.close();
		receiver.server.closeAllConnections();
		await new Promise((resolve) => receiver.server.close(resolve));
	});

	beforeEach(() => {
		fake.reset();
		receiver.received.length = 0;
		receiver.rejected.length = 0;
		receiver.nextStatuses.length = 0;
	});

	/** Creates a customer and an open checkout session for the small plan. */
	async function openCheckout(trialDays?: number) {
		const customer = await stripe.customers.create({
			email: 'owner@fernhill.test',
			name: 'Fernhill Precision'
		});
		const session = await stripe.checkout.sessions.create({
			mode: 'subscription',
			customer: customer.id,
			line_items: [{ price: 'price_small', quantity: 1 }],
			success_url: 'http://app.test/billing/done?session={CHECKOUT_SESSION_ID}',
			cancel_url: 'http://app.test/billing',
			client_reference_id: 'fernhill',
			metadata: { shop: 'fernhill' },
			...(trialDays
				? { subscription_data: { trial_period_days: trialDays, metadata: { shop: 'fernhill' } } }
				: {})
		});
		return { customer, session };
	}

	/** Submits the stand-in checkout form as a browser would. */
	function pay(url: string, card: string) {
		return fetch(url, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ card_number: card, expiry: '12/34', cvc: '123' }),
			redirect: 'manual'
		});
	}

	/** A paid subscription to work on, with the receiver's log emptied afterwards. */
	async function subscribed() {
		const { customer, session } = await openCheckout();
		await pay(session.url!, '4242 4242 4242 4242');
		const [sub] = (await stripe.subscriptions.list({ customer: customer.id })).data;
		receiver.received.length = 0;
		return { customer, sub };
	}

	it('honours subscription_data[trial_end]: trialing until then, nothing charged, near ends refused', async () => {
		const customer = await stripe.customers.create({ email: 'owner@fernhill.test' });
		const base = {
			mode: 'subscription' as const,
			customer: customer.id,
			line_items: [{ price: 'price_small', quantity: 1 }],
			success_url: 'http://app.test/billing/done'
		};
		const now = Math.floor(Date.now() / 1000);
		// Stripe's Checkout wants the trial end at least 48 hours ahead.
		await expect(
			stripe.checkout.sessions.create({ ...base, subscription_data: { trial_end: now + 3600 } })
		).rejects.toMatchObject({ param: 'subscription_data[trial_end]' });
		const end = now + 10 * 86_400;
		const session = await stripe.checkout.sessions.create({
			...base,
			subscription_data: { trial_end: end }
		});
		expect(session.amount_total).toBe(0);
		await pay(session.url!, '4242 4242 4242 4242');
		const [sub] = (await stripe.subscriptions.list({ customer: customer.id })).data;
		expect(sub.status).toBe('trialing');
		expect(sub.trial_end).toBe(end);
		expect(sub.items.data[0].current_period_end).toBe(end);
		const invoices = (await stripe.invoices.list({ customer: customer.id })).data;
		expect(invoices.map((i) => i.amount_paid)).toEqual([0]);
	});

	it('creates, retrieves and updates customers; unknown ids are resource_missing 404s', async () => {
		const created = await stripe.customers.create({
			email: 'owner@fernhill.test',
			metadata: { shop: 'fernhill' }
		});
		expect(created.id).toMatch(/^cus_/);
		const fetched = await stripe.customers.retrieve(created.id);
		expect(fetched).toMatchObject({
			id: created.id,
			email: 'owner@fernhill.test',
			metadata: { shop: 'fernhill' }
		});
		const updated = await stripe.customers.update(created.id, {
			name: 'Fernhill Precision',
			metadata: { shop: '' }
		});
		expect(updated).toMatchObject({ name: 'Fernhill Precision', metadata: {} });

		await expect(stripe.customers.retrieve('cus_nope')).rejects.toMatchObject({
			type: 'StripeInvalidRequestError',
			code: 'resource_missing',
			statusCode: 404
		});
	});

	it('refuses requests without a test key in Stripe error shape', async () => {
		const bare = await fetch(`${fake.url}/v1/customers`);
		expect(bare.status).toBe(401);
		expect(await bare.json()).toEqual({
			error: { type: 'invalid_request_error', message: expect.stringContaining('API key') }
		});
		const live = new Stripe('sk_live_nope', {
			host: '127.0.0.1',
			port: fake.port,
			protocol: 'http',
			maxNetworkRetries: 0
		});
		await expect(live.customers.list()).rejects.toMatchObject({
			type: 'StripeAuthenticationError',
			statusCode: 401
		});
	});

	it('validates checkout parameters and parses bracketed line items', async () => {
		await expect(
			stripe.checkout.sessions.create({
				mode: 'subscription',
				line_items: [{ price: 'price_missing', quantity: 1 }],
				success_url: 'http://app.test/ok'
			})
		).rejects.toMatchObject({
			code: 'resource_missing',
			param: 'line_items[0][price]',
			statusCode: 400
		});
		const { session } = await openCheckout();
		expect(session).toMatchObject({
			object: 'checkout.session',
			status: 'open',
			mode: 'subscription',
			amount_total: 2900,
			client_reference_id: 'fernhill',
			metadata: { shop: 'fernhill' }
		});
		expect(session.url).toBe(`${fake.publicUrl}/checkout/${session.id}`);
		expect(session.id).toMatch(/^cs_test_/);
	});

	it('serves a stand-in checkout page; the good card subscribes, sends signed webhooks and redirects', async () => {
		const { customer, session } = await openCheckout(14);
		const page = await fetch(session.url!);
		const html = await page.text();
		expect(html).toContain('Local test stand-in');
		expect(html).toContain('name="card_number"');
		expect(html).toContain('href="http://app.test/billing"');

		const paid = await pay(session.url!, '4242 4242 4242 4242');
		expect(paid.status).toBe(303);
		expect(paid.headers.get('location')).toBe(`http://app.test/billing/done?session=${session.id}`);

		// Delivered (and verified by constructEvent) before the redirect was answered.
		expect(receiver.rejected).toEqual([]);
		expect(receiver.received.map((r) => r.event.type)).toEqual([
			'checkout.session.completed',
			'customer.subscription.created',
			'invoice.paid'
		]);
		const [completed, created, invoicePaid] = receiver.received.map((r) => r.event);
		expect(completed.api_version).toBe(Stripe.API_VERSION);
		const sub = created.data.object as Stripe.Subscription;
		expect(sub).toMatchObject({
			status: 'trialing',
			customer: customer.id,
			metadata: { shop: 'fernhill' }
		});
		expect(sub.trial_end! - sub.trial_start!).toBe(14 * 86_400);
		expect((completed.data.object as Stripe.Checkout.Session).subscription).toBe(sub.id);
		const invoice = invoicePaid.data.object as Stripe.Invoice;
		expect(invoice).toMatchObject({ status: 'paid', amount_paid: 0, customer: customer.id });
		expect(invoice.parent?.subscription_details?.subscription).toBe(sub.id);

		const listed = await stripe.subscriptions.list({ customer: customer.id });
		expect(listed.data.map((s) => s.id)).toEqual([sub.id]);
		expect(listed.data[0].items.data[0].price.id).toBe('price_small');
		const retrieved = await stripe.checkout.sessions.retrieve(session.id, {
			expand: ['subscription']
		});
		expect(retrieved.status).toBe('complete');
		expect((retrieved.subscription as Stripe.Subscription).id).toBe(sub.id);
		const invoices = await stripe.invoices.list({ customer: customer.id });
		expect(invoices.data.map((i) => i.id)).toEqual([invoice.id]);
	});

	it('without a trial the subscription is active and the first invoice is paid in full', async () => {
		const { customer, session } = await openCheckout();
		await pay(session.url!, '4242424242424242');
		const sub = (await stripe.subscriptions.list({ customer: customer.id })).data[0];
		expect(sub.status).toBe('active');
		const [invoice] = (await stripe.invoices.list({ customer: customer.id })).data;
		expect(invoice).toMatchObject({ status: 'paid', amount_paid: 2900 });
	});

	it('a declined card shows the decline, keeps the session open and creates no subscription', async () => {
		const { customer, session } = await openCheckout(14);
		const declined = await pay(session.url!, '4000 0000 0000 0002');
		expect(declined.status).toBe(402);
		expect(await declined.text()).toContain('Your card was declined.');
		expect((await stripe.checkout.sessions.retrieve(session.id)).status).toBe('open');
		expect(
			(await stripe.subscriptions.list({ customer: customer.id, status: 'all' })).data
		).toEqual([]);
		expect(receiver.received).toEqual([]);
		expect(fake.events()).toEqual([]);
	});

	it('opens a billing portal page where a plan switch updates the subscription and is announced by webhook', async () => {
		const { customer, sub } = await subscribed();
		const portal = await stripe.billingPortal.sessions.create({
			customer: customer.id,
			return_url: 'http://app.test/billing'
		});
		expect(portal.url).toBe(`${fake.publicUrl}/portal/${portal.id}`);
		const page = await (await fetch(portal.url)).text();
		expect(page).toContain('Small');
		expect(page).toContain('value="price_large"');

		const switched = await fetch(`${fake.publicUrl}/portal/${portal.id}/switch`, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ subscription: sub.id, price: 'price_large' }),
			redirect: 'manual'
		});
		expect(switched.status).toBe(303);
		expect((await stripe.subscriptions.retrieve(sub.id)).items.data[0].price.id).toBe(
			'price_large'
		);
		const [update] = receiver.received.map((r) => r.event);
		expect(update.type).toBe('customer.subscription.updated');
		expect(update.data.previous_attributes).toHaveProperty('items');
	});

	it('updates and cancels subscriptions through the API, and moves the clock to the period end', async () => {
		const { sub } = await subscribed();
		const updated = await stripe.subscriptions.update(sub.id, { cancel_at_period_end: true });
		expect(updated.cancel_at_period_end).toBe(true);
		await fake.idle();
		expect(receiver.received.map((r) => r.event.type)).toEqual(['customer.subscription.updated']);

		const advanced = await fetch(`${fake.url}/_fake/clock/advance`, {
			method: 'POST',
			body: JSON.stringify({ days: 32 })
		});
		expect(
			((await advanced.json()) as { events: Array<{ type: string }> }).events.map((e) => e.type)
		).toEqual(['customer.subscription.deleted']);
		expect((await stripe.subscriptions.retrieve(sub.id)).status).toBe('canceled');
		// Canceled subscriptions drop out of the default list, as in Stripe.
		expect((await stripe.subscriptions.list({ customer: String(sub.customer) })).data).toEqual([]);
		await expect(stripe.subscriptions.cancel(sub.id)).rejects.toMatchObject({ statusCode: 400 });
	});

	it("'twice' delivers the same event id twice, each with a valid signature", async () => {
		const { sub } = await subscribed();
		const res = await fetch(`${fake.url}/_fake/events`, {
			method: 'POST',
			body: JSON.stringify({
				subscription: sub.id,
				type: 'invoice.payment_failed',
				deliver: 'twice'
			})
		});
		expect(res.status).toBe(200);
		const ids = receiver.received.map((r) => r.event.id);
		expect(ids).toHaveLength(2);
		expect(ids[0]).toBe(ids[1]);
		expect(receiver.received[0].event.type).toBe('invoice.payment_failed');
		expect((await stripe.subscriptions.retrieve(sub.id)).status).toBe('past_due');
	});

	it("'reversed' delivers a batch newest first", async () => {
		const { sub } = await subscribed();
		await fetch(`${fake.url}/_fake/events`, {
			method: 'POST',
			body: JSON.stringify({
				subscription: sub.id,
				steps: [
					{ type: 'customer.subscription.updated', changes: { status: 'past_due' } },
					{ type: 'customer.subscription.deleted' }
				],
				deliver: 'reversed'
			})
		});
		const events = receiver.received.map((r) => r.event);
		expect(events.map((e) => e.type)).toEqual([
			'customer.subscription.deleted',
			'customer.subscription.updated'
		]);
		expect(events[0].created).toBeGreaterThan(events[1].created);
		// The state reflects the last step, whatever order the app hears about it in.
		expect((await stripe.subscriptions.retrieve(sub.id)).status).toBe('canceled');
	});

	it('retries a delivery the app refused and logs each attempt', async () => {
		const { sub } = await subscribed();
		receiver.nextStatuses.push(500, 503);
		await fetch(`${fake.url}/_fake/events`, {
			method: 'POST',
			body: JSON.stringify({ subscription: sub.id, type: 'invoice.paid' })
		});
		await fake.idle();
		const log = (await (await fetch(`${fake.url}/_fake/events`)).json()) as {
			data: Array<{ type: string; outcome: string; attempts: Array<{ status: number }> }>;
		};
		const last = log.data[log.data.length - 1];
		expect(last.type).toBe('invoice.paid');
		expect(last.attempts.map((a) => a.status)).toEqual([500, 503, 200]);
		expect(last.outcome).toBe('delivered');
		expect(receiver.received.map((r) => r.event.type)).toEqual(['invoice.paid']);
	});

	it('gives up after the bounded number of attempts', async () => {
		const { sub } = await subscribed();
		receiver.nextStatuses.push(500, 500, 500, 500);
		await fetch(`${fake.url}/_fake/events`, {
			method: 'POST',
			body: JSON.stringify({ subscription: sub.id, type: 'customer.subscription.deleted' })
		});
		await fake.idle();
		const last = fake.events().at(-1)!;
		expect(last.attempts.map((a) => a.status)).toEqual([500, 500, 500]);
		expect(receiver.received).toEqual([]);
	});
});
