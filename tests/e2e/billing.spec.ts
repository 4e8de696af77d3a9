import { expect, test, type Page } from '@playwright/test';
import type { Knex } from 'knex';
import { baseURL, DEMO_PASSWORD, FERNHILL, mailsTo, openTestDb, signedInClient } from './helpers';

/**
 * Billing end to end: the production build, the local fake Stripe (its stand-in checkout page
 * and its signed webhooks) and the fake SES. Runs in order against Fernhill Precision, whose
 * billing columns are put back on the trial first so the file can run again.
 */
test.describe.configure({ mode: 'serial' });

const FAKE_STRIPE = `http://127.0.0.1:${process.env.FAKE_STRIPE_PORT ?? 12121}`;
const BILLING = `/shops/${FERNHILL.slug}/billing`;

let sql: Knex;
test.beforeAll(async () => {
	sql = openTestDb();
	const shop = await sql('shops').where({ slug: FERNHILL.slug }).first('id');
	await sql('billing_invoices').where({ shop_id: shop.id }).del();
	await sql('shops')
		.where({ id: shop.id })
		.update({
			plan: null,
			subscription_status: 'trialing',
			trial_ends_at: sql.raw(`now() + interval '14 days'`),
			stripe_customer_id: null,
			stripe_subscription_id: null,
			current_period_end: null,
			cancel_at_period_end: false,
			past_due_since: null,
			billing_state_at: null
		});
});
test.afterAll(async () => {
	await sql?.destroy();
});

async function signIn(page: Page, email: string) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops/);
}

async function payOnFakeCheckout(page: Page, card: string) {
	await expect(page).toHaveURL(new RegExp(`^${FAKE_STRIPE}/checkout/`));
	await page.getByLabel('Card number').fill(card);
	await page.getByLabel('Expiry').fill('12/34');
	await page.getByLabel('CVC').fill('123');
	// "Start trial" when the shop's trial is kept to its end (paying during the trial keeps it), else "Subscribe".
	await page.getByRole('button', { name: /^(Subscribe|Start trial)$/ }).click();
}

async function fakeEvents(body: Record<string, unknown>) {
	const res = await fetch(`${FAKE_STRIPE}/_fake/events`, {
		method: 'POST',
		headers: { 'content-type': 'application/json' },
		body: JSON.stringify(body)
	});
	expect(res.status, await res.clone().text()).toBe(200);
	return (await res.json()) as {
		events: {
			id: string;
			type: string;
			outcome: string;
			attempts: { status: number | null }[];
		}[];
	};
}

async function subscriptionId(): Promise<string> {
	const row = await sql('shops').where({ slug: FERNHILL.slug }).first('stripe_subscription_id');
	expect(row.stripe_subscription_id).toMatch(/^sub_/);
	return row.stripe_subscription_id;
}

test('leads and operators get 403 on the billing page and its actions; no Billing link for them', async ({
	page
}) => {
	for (const who of [FERNHILL.operator, FERNHILL.lead]) {
		const client = await signedInClient(who);
		expect((await client.get(BILLING, { maxRedirects: 0 })).status(), who).toBe(403);
		const post = await client.post(`${BILLING}?/choosePlan`, {
			form: { plan: 'floor' },
			headers: { accept: 'application/json' },
			maxRedirects: 0
		});
		const answer = (await post.json().catch(() => ({}))) as { status?: number };
		expect(answer.status ?? post.status(), who).toBe(403);
		await client.dispose();
	}
	await signIn(page, FERNHILL.operator);
	await page.goto(`/shops/${FERNHILL.slug}`);
	await expect(page.getByRole('navigation', { name: 'Shop' })).toBeVisible();
	await expect(page.getByRole('link', { name: 'Billing' })).toHaveCount(0);
});

test('an unknown plan is refused with a specific message and nothing changes', async () => {
	const ada = await signedInClient(FERNHILL.owner);
	const res = await ada.post(`${BILLING}?/choosePlan`, {
		form: { plan: 'platinum' },
		headers: { accept: 'application/json' },
		maxRedirects: 0
	});
	const body = (await res.json()) as { status: number; data: string };
	expect(body.status).toBe(400);
	expect(body.data).toContain('Choose one of the plans: Bench, Shop, Floor.');
	const shop = await sql('shops').where({ slug: FERNHILL.slug }).first();
	expect(shop).toMatchObject({ subscription_status: 'trialing', stripe_customer_id: null });
	await ada.dispose();
});

test('a declined card leaves the shop on its trial, with a clear message', async ({ page }) => {
	await signIn(page, FERNHILL.owner);
	await page.goto(BILLING);
	await expect(page.getByTestId('billing-status')).toContainText('Trial');
	await page.getByTestId('plan-shop').getByRole('button', { name: 'Choose Shop' }).click();
	await payOnFakeCheckout(page, '4000 0000 0000 0002');
	await expect(page.getByRole('alert')).toHaveText('Your card was declined.');

	await page.getByRole('link', { name: 'Cancel and return to the app' }).click();
	await expect(page).toHaveURL(new RegExp(`${BILLING}\\?checkout=cancelled$`));
	await expect(page.getByTestId('billing-return')).toContainText('No payment was made');
	await expect(page.getByTestId('billing-return')).toContainText('stays on its trial until');
	await expect(page.getByTestId('billing-status')).toContainText('Trial');
	await expect(page.getByTestId('billing-plan')).toHaveText('Trial (14 days)');
	const shop = await sql('shops').where({ slug: FERNHILL.slug }).first();
	expect(shop).toMatchObject({ subscription_status: 'trialing', plan: null });
	expect(shop.stripe_subscription_id).toBeNull();
});

test('the owner subscribes through the fake checkout and the billing page shows the plan active', async ({
	page
}) => {
	await signIn(page, FERNHILL.owner);
	await page.goto(BILLING);
	await page.getByTestId('plan-shop').getByRole('button', { name: 'Choose Shop' }).click();
	await payOnFakeCheckout(page, '4242 4242 4242 4242');

	await expect(page).toHaveURL(new RegExp(`${BILLING}\\?checkout=done$`));
	await expect(page.getByTestId('billing-return')).toContainText('The Shop plan is active.');
	await expect(page.getByTestId('billing-plan')).toHaveText('Shop');
	await expect(page.getByTestId('billing-status')).toContainText('Active');
	await expect(page.getByTestId('billing-machines')).toContainText('of 10');
	await expect(page.getByTestId('invoices-table').locator('tbody tr')).toHaveCount(1);
	await expect(page.getByTestId('invoices-table')).toContainText('Paid');
	await expect(page.getByTestId('plan-shop')).toContainText('Current plan');

	// Manage billing opens the provider's portal for this shop's customer, and comes back.
	await page.getByRole('button', { name: 'Manage billing' }).click();
	await expect(page).toHaveURL(new RegExp(`^${FAKE_STRIPE}/portal/`));
	await expect(page.getByRole('heading', { name: 'Test billing portal' })).toBeVisible();
	await page.getByRole('link', { name: 'Return to the app' }).click();
	await expect(page).toHaveURL(new RegExp(`${BILLING}$`));

	await page.goto(`/shops/${FERNHILL.slug}/audit`);
	await expect(page.getByTestId('audit-table')).toContainText('Subscription started');
});

test('a payment failure delivered twice is applied once: one e-mail each to owner and admin, banner shown', async ({
	page
}) => {
	const subject = /Payment failed for Fernhill Precision/;
	const count = async (who: string) =>
		(await mailsTo(who)).filter((m) => subject.test(m.subject)).length;
	const [ownerBefore, adminBefore, leadBefore] = await Promise.all(
		[FERNHILL.owner, FERNHILL.admin, FERNHILL.lead].map(count)
	);

	const { events } = await fakeEvents({
		subscription: await subscriptionId(),
		type: 'invoice.payment_failed',
		deliver: 'twice'
	});
	expect(events[0].outcome).toBe('delivered');
	expect(events[0].attempts.map((a) => a.status)).toEqual([200, 200]);

	expect(await count(FERNHILL.owner)).toBe(ownerBefore + 1);
	expect(await count(FERNHILL.admin)).toBe(adminBefore + 1);
	expect(await count(FERNHILL.lead)).toBe(leadBefore);
	const events2 = await sql('billing_events')
		.where({ stripe_event_id: events[0].id })
		.count({ n: '*' });
	expect(Number(events2[0].n)).toBe(1);

	await signIn(page, FERNHILL.owner);
	await page.goto(BILLING);
	await expect(page.getByTestId('billing-status')).toContainText('Payment overdue');
	await expect(page.getByTestId('billing-banner')).toContainText('Payment overdue');
});

test('out-of-order plan updates: the older one is ignored; then a payment recovers the shop', async ({
	page
}) => {
	const sub = await subscriptionId();
	// Floor first, then back to Shop; delivered newest first, so Floor arrives last and is stale.
	const { events } = await fakeEvents({
		subscription: sub,
		deliver: 'reversed',
		steps: [
			{ type: 'customer.subscription.updated', changes: { price: 'price_floor_monthly' } },
			{ type: 'customer.subscription.updated', changes: { price: 'price_shop_monthly' } }
		]
	});
	expect(events.map((e) => e.outcome)).toEqual(['delivered', 'delivered']);
	const outcomes = await sql('billing_events')
		.where({ type: 'customer.subscription.updated' })
		.orderBy('id', 'desc')
		.limit(2)
		.pluck('outcome');
	expect(outcomes).toEqual(['stale', 'applied']);

	await fakeEvents({ subscription: sub, type: 'invoice.paid' });
	await signIn(page, FERNHILL.owner);
	await page.goto(BILLING);
	await expect(page.getByTestId('billing-plan')).toHaveText('Shop');
	await expect(page.getByTestId('billing-status')).toContainText('Active');
	await expect(page.getByTestId('billing-banner')).toHaveCount(0);
});

test('an admin switches the plan; the change shows once the webhook confirms it', async ({
	page
}) => {
	await signIn(page, FERNHILL.admin);
	await page.goto(BILLING);
	await page.getByTestId('plan-floor').getByRole('button', { name: 'Switch to Floor' }).click();
	await expect(
		page.getByRole('status').filter({ hasText: 'Plan change to Floor sent' })
	).toBeVisible();
	await expect(async () => {
		await page.goto(BILLING);
		await expect(page.getByTestId('billing-plan')).toHaveText('Floor', { timeout: 500 });
	}).toPass({ timeout: 10_000 });
	await expect(page.getByTestId('billing-machines')).toContainText('of no limit');
	// Choosing the plan already held is refused in words, and changes nothing.
	const tomas = await signedInClient(FERNHILL.admin);
	const again = await tomas.post(`${BILLING}?/choosePlan`, {
		form: { plan: 'floor' },
		headers: { accept: 'application/json' },
		maxRedirects: 0
	});
	const body = (await again.json()) as { status: number; data: string };
	expect(body.status).toBe(409);
	expect(body.data).toContain('already on the Floor plan');
	await tomas.dispose();
});

test('the owner schedules a cancellation in the portal (banner) and takes it back', async ({
	page
}) => {
	await signIn(page, FERNHILL.owner);
	await page.goto(BILLING);
	const current = page.locator(`[data-subscription="${await subscriptionId()}"]`);
	await page.getByRole('button', { name: 'Manage billing' }).click();
	await current.getByRole('button', { name: 'Cancel at end of period' }).click();
	await expect(
		page.getByText('The subscription will end at the end of the current period.')
	).toBeVisible();
	await page.getByRole('link', { name: 'Return to the app' }).click();
	await expect(page.getByTestId('billing-banner')).toContainText('set to end on');
	await expect(page.getByTestId('billing-status')).toContainText('Active');

	await page.getByRole('button', { name: 'Manage billing' }).click();
	await current.getByRole('button', { name: 'Keep the subscription' }).click();
	await page.getByRole('link', { name: 'Return to the app' }).click();
	await expect(page.getByTestId('billing-banner')).toHaveCount(0);
	const audit = await sql('shops').where({ slug: FERNHILL.slug }).first('schema_name');
	const actions = await sql
		.withSchema(audit.schema_name)
		.from('audit_log')
		.orderBy('id', 'desc')
		.limit(10)
		.pluck('action');
	expect(actions).toEqual(
		expect.arrayContaining(['billing.cancel-scheduled', 'billing.cancel-withdrawn'])
	);
});

test('a webhook with a bad signature gets 400 and changes nothing', async ({ request }) => {
	const before = await sql('shops').where({ slug: FERNHILL.slug }).first();
	const payload = JSON.stringify({
		id: 'evt_forged_1',
		object: 'event',
		type: 'customer.subscription.deleted',
		created: Math.floor(Date.now() / 1000) + 3600,
		data: {
			object: { id: before.stripe_subscription_id, object: 'subscription', status: 'canceled' }
		}
	});
	const res = await request.post(`${baseURL}/api/v1/stripe/webhook`, {
		data: payload,
		headers: { 'content-type': 'application/json', 'stripe-signature': 't=1,v1=00ff' }
	});
	expect(res.status()).toBe(400);
	expect(await sql('billing_events').where({ stripe_event_id: 'evt_forged_1' })).toHaveLength(0);
	expect(await sql('shops').where({ slug: FERNHILL.slug }).first()).toEqual(before);
});
