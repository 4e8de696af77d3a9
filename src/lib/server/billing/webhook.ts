/**
 * Stripe webhooks (issue 8). The route hands over the raw body and signature; this module
 * verifies them, then applies the event to the shop in one transaction:
 *
 * - idempotent by event id: the id is claimed in public.billing_events first (unique), so a
 *   replay, a retry after success or a second copy arriving at the same time does nothing;
 * - ordered by `created`: an event older than the shop's `billing_state_at` (the newest event
 *   applied) is recorded as 'stale' and changes nothing, so late or reversed delivery cannot
 *   undo a newer state;
 * - the shop row is locked while the event is applied, and the event row, shop row, invoice
 *   row and audit entry commit together or not at all (a failure answers 500, Stripe retries).
 *
 * Payment failures e-mail the shop's owners and admins after the commit, with a dedupe key per
 * event and person, so a retry sends what failed and never sends twice.
 */
import type { Knex } from 'knex';
import Stripe from 'stripe';
import { isPlanKey, PAST_DUE_GRACE_DAYS, planByKey, type PlanKey } from '$lib/billing/plans';
import { audit } from '../audit';
import { config } from '../config';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { planForPrice } from './stripe';
import { getShopBilling, type ShopBilling, type SubscriptionStatus } from './state';
import { enterShop, leaveShop } from '../db/roles';

type Obj = Record<string, unknown>;
export type Outcome = 'applied' | 'stale' | 'ignored';

export interface ProcessResult {
	outcome: Outcome;
	note: string;
	shopId: number | null;
	duplicate: boolean;
}

export interface WebhookAnswer {
	status: number;
	body: Record<string, unknown>;
}

/** The event types this app acts on; any other verified event is stored as 'ignored'. */
export const HANDLED_EVENTS = [
	'checkout.session.completed',
	'customer.subscription.created',
	'customer.subscription.updated',
	'customer.subscription.deleted',
	'invoice.paid',
	'invoice.payment_failed'
] as const;

const isObj = (v: unknown): v is Obj => typeof v === 'object' && v !== null && !Array.isArray(v);
const str = (o: Obj | undefined, k: string): string | undefined =>
	o && typeof o[k] === 'string' ? (o[k] as string) : undefined;
const num = (o: Obj | undefined, k: string): number | undefined =>
	o && typeof o[k] === 'number' ? (o[k] as number) : undefined;
const obj = (o: Obj | undefined, k: string): Obj | undefined =>
	o && isObj(o[k]) ? (o[k] as Obj) : undefined;
/** An id field that may be expanded into an object. */
const idOf = (o: Obj | undefined, k: string): string | undefined =>
	str(o, k) ?? str(obj(o, k), 'id');
const toDate = (unix: number | undefined) => (unix === undefined ? null : new Date(unix * 1000));

/** Verifies the signature on the exact raw body. Never throws. */
export function verifyEvent(
	rawBody: string,
	signature: string | null,
	secret: string
): { ok: true; event: Stripe.Event } | { ok: false; message: string } {
	if (!signature) return { ok: false, message: 'Missing Stripe-Signature header.' };
	try {
		return { ok: true, event: Stripe.webhooks.constructEvent(rawBody, signature, secret) };
	} catch (e) {
		return {
			ok: false,
			message: `Signature check failed: ${e instanceof Error ? e.message : String(e)}`
		};
	}
}

/** The whole webhook request: verify, process, notify; answers what the route returns. */
export async function handleStripeWebhook(
	knex: Knex,
	rawBody: string,
	signature: string | null,
	secret: string | undefined = config.stripe.webhookSecret
): Promise<WebhookAnswer> {
	if (!secret) {
		console.error('stripe webhook: STRIPE_WEBHOOK_SECRET is not set; refusing events');
		return { status: 500, body: { error: 'Webhook secret not configured.' } };
	}
	const verified = verifyEvent(rawBody, signature, secret);
	if (!verified.ok) return { status: 400, body: { error: verified.message } };
	const event = verified.event;
	const result = await processEvent(knex, event);
	// Also on a replay of an applied failure: a retry after a failed send sends what is owed;
	// the dedupe keys stop doubles.
	if (
		result.outcome === 'applied' &&
		result.shopId !== null &&
		event.type === 'invoice.payment_failed'
	) {
		await notifyPaymentFailed(knex, result.shopId, event);
	}
	return {
		status: 200,
		body: { received: true, id: event.id, outcome: result.outcome, duplicate: result.duplicate }
	};
}

/** Applies one verified event (see the module comment). Exported for tests. */
export async function processEvent(
	knex: Knex,
	event: Pick<Stripe.Event, 'id' | 'type' | 'created'> & { data: { object: unknown } }
): Promise<ProcessResult> {
	return knex.transaction(async (trx) => {
		const createdAt = new Date(event.created * 1000);
		const [claimed] = await trx('public.billing_events')
			.insert({
				stripe_event_id: event.id,
				type: event.type,
				event_created_at: createdAt,
				outcome: 'ignored',
				payload: JSON.stringify(event)
			})
			.onConflict('stripe_event_id')
			.ignore()
			.returning('id');
		if (!claimed) {
			const seen = await trx('public.billing_events')
				.where({ stripe_event_id: event.id })
				.first('outcome', 'note', 'shop_id');
			return {
				outcome: seen.outcome,
				note: seen.note,
				shopId: seen.shop_id === null ? null : Number(seen.shop_id),
				duplicate: true
			};
		}
		const object = isObj(event.data.object) ? event.data.object : {};
		const result = await apply(trx, event.type, object, createdAt);
		await trx('public.billing_events').where({ id: claimed.id }).update({
			outcome: result.outcome,
			note: result.note,
			shop_id: result.shopId
		});
		return { ...result, duplicate: false };
	});
}

type Applied = Omit<ProcessResult, 'duplicate'>;

async function apply(
	trx: Knex.Transaction,
	type: string,
	o: Obj,
	createdAt: Date
): Promise<Applied> {
	if (!(HANDLED_EVENTS as readonly string[]).includes(type)) {
		return { outcome: 'ignored', note: `event type ${type} is not used`, shopId: null };
	}
	const resolved = await resolveShop(trx, type, o);
	if (resolved === null) {
		return { outcome: 'ignored', note: 'no shop matches this event', shopId: null };
	}
	if ('refused' in resolved) {
		console.warn(`Stripe webhook: ${type} refused: ${resolved.refused}`);
		return { outcome: 'ignored', note: `refused: ${resolved.refused}`, shopId: null };
	}
	const shopId = resolved.shopId;
	const before = await getShopBilling(trx, shopId, true);
	const ctx: Ctx = { trx, shopId, before, createdAt, changes: {}, audits: [] };

	// Invoice rows are kept per invoice (guarded by their own event time), even when the event is
	// too old to change the shop's state.
	if (type === 'invoice.paid' || type === 'invoice.payment_failed') {
		await upsertInvoice(trx, shopId, o, createdAt);
	}
	if (before.stateAt && createdAt < before.stateAt) {
		return {
			outcome: 'stale',
			note: `older than the shop's billing state (${before.stateAt.toISOString()})`,
			shopId
		};
	}

	let note: string;
	switch (type) {
		case 'checkout.session.completed':
			note = onCheckoutCompleted(ctx, o);
			break;
		case 'customer.subscription.created':
		case 'customer.subscription.updated':
			note = onSubscriptionChanged(ctx, o, type === 'customer.subscription.created');
			break;
		case 'customer.subscription.deleted':
			note = onSubscriptionDeleted(ctx, o);
			break;
		case 'invoice.paid':
			note = onInvoicePaid(ctx, o);
			break;
		default:
			note = onPaymentFailed(ctx, o);
	}
	if (note.startsWith('ignored:')) return { outcome: 'ignored', note: note.slice(9), shopId };

	await trx('public.shops')
		.where({ id: shopId })
		.update({ ...ctx.changes, billing_state_at: createdAt });
	if (ctx.audits.length) {
		const { schema_name: schema } = await trx('public.shops')
			.where({ id: shopId })
			.first('schema_name');
		await enterShop(trx, schema);
		for (const a of ctx.audits) {
			await audit(trx, { actorEmail: 'Stripe (webhook)', action: a.action, detail: a.detail });
		}
		await leaveShop(trx);
	}
	return { outcome: 'applied', note, shopId };
}

interface Ctx {
	trx: Knex.Transaction;
	shopId: number;
	before: ShopBilling;
	createdAt: Date;
	changes: Record<string, unknown>;
	audits: { action: string; detail: Record<string, unknown> }[];
}

/**
 * Which shop an event is about. The stored Stripe ids decide: a customer or subscription we
 * already know belongs to exactly one shop, whatever the event's metadata says. Metadata
 * (`client_reference_id` / `shop_id`, set by our own checkout) is used only to attach a first
 * checkout to a shop with no Stripe customer yet, and never against a stored id. Any
 * disagreement is refused: a signed event for one shop's customer cannot change another shop.
 */
async function resolveShop(
	trx: Knex.Transaction,
	type: string,
	o: Obj
): Promise<{ shopId: number } | { refused: string } | null> {
	let metaShop: string | undefined;
	let subscriptionId: string | undefined;
	if (type === 'checkout.session.completed') {
		metaShop = str(o, 'client_reference_id') ?? str(obj(o, 'metadata'), 'shop_id');
		subscriptionId = idOf(o, 'subscription');
	} else if (type.startsWith('customer.subscription.')) {
		metaShop = str(obj(o, 'metadata'), 'shop_id');
		subscriptionId = str(o, 'id');
	} else {
		const details = obj(obj(o, 'parent'), 'subscription_details');
		metaShop = str(obj(details, 'metadata'), 'shop_id');
		subscriptionId = idOf(details, 'subscription') ?? idOf(o, 'subscription');
	}
	const customerId = idOf(o, 'customer');
	const idOfRow = async (where: Record<string, unknown>) => {
		const row = await trx('public.shops').where(where).first('id');
		return row ? Number(row.id) : null;
	};
	const byCustomer = customerId ? await idOfRow({ stripe_customer_id: customerId }) : null;
	const bySubscription = subscriptionId
		? await idOfRow({ stripe_subscription_id: subscriptionId })
		: null;
	const meta = metaShop && /^[1-9][0-9]{0,15}$/.test(metaShop) ? Number(metaShop) : null;
	if (byCustomer !== null && bySubscription !== null && byCustomer !== bySubscription)
		return {
			refused: `customer ${customerId} belongs to shop ${byCustomer} but subscription ${subscriptionId} to shop ${bySubscription}`
		};
	const stored = byCustomer ?? bySubscription;
	if (stored !== null) {
		if (meta !== null && meta !== stored)
			return {
				refused: `metadata names shop ${meta} but the Stripe ids belong to shop ${stored}`
			};
		return { shopId: stored };
	}
	if (meta === null) return null;
	// A first checkout: the named shop must not already have another Stripe customer.
	const shop = await trx('public.shops').where({ id: meta }).first('id', 'stripe_customer_id');
	if (!shop) return null;
	if (shop.stripe_customer_id && shop.stripe_customer_id !== customerId)
		return {
			refused: `shop ${meta} already has Stripe customer ${shop.stripe_customer_id}, not ${customerId ?? 'none'}`
		};
	return { shopId: meta };
}

function mapStatus(stripeStatus: string | undefined): SubscriptionStatus | null {
	switch (stripeStatus) {
		case 'active':
		case 'trialing':
			return 'active';
		case 'past_due':
		case 'unpaid':
		case 'paused':
			return 'past_due';
		case 'canceled':
		case 'incomplete_expired':
			return 'canceled';
		default:
			// 'incomplete': the first payment has not gone through; the shop stays as it is.
			return null;
	}
}

function setStatus(ctx: Ctx, status: SubscriptionStatus): void {
	ctx.changes.subscription_status = status;
	if (status === 'past_due') {
		ctx.changes.past_due_since = ctx.before.pastDueSince ?? ctx.createdAt;
	} else {
		ctx.changes.past_due_since = null;
	}
	if (status !== ctx.before.status) {
		ctx.audits.push({
			action: 'billing.status-changed',
			detail: { from: ctx.before.status, to: status }
		});
	}
}

function setPlan(ctx: Ctx, plan: PlanKey | undefined): void {
	if (!plan) return;
	ctx.changes.plan = plan;
	if (plan !== ctx.before.plan) {
		ctx.audits.push({
			action: 'billing.plan-changed',
			detail: { from: ctx.before.plan ?? 'trial', to: plan, name: planByKey(plan).name }
		});
	}
}

function onCheckoutCompleted(ctx: Ctx, o: Obj): string {
	const subscriptionId = idOf(o, 'subscription');
	if (str(o, 'mode') !== 'subscription' || !subscriptionId) {
		return 'ignored: not a subscription checkout';
	}
	const paid = ['paid', 'no_payment_required'].includes(str(o, 'payment_status') ?? '');
	if (!paid) return 'ignored: checkout completed without payment';
	const plan = str(obj(o, 'metadata'), 'plan');
	ctx.changes.stripe_subscription_id = subscriptionId;
	const customer = idOf(o, 'customer');
	if (customer) ctx.changes.stripe_customer_id = customer;
	ctx.changes.cancel_at_period_end = false;
	setPlan(ctx, isPlanKey(plan) ? plan : undefined);
	setStatus(ctx, 'active');
	ctx.audits.push({
		action: 'billing.subscribed',
		detail: { plan: plan ?? '', subscription: subscriptionId }
	});
	return 'subscription started';
}

function onSubscriptionChanged(ctx: Ctx, o: Obj, created: boolean): string {
	const id = str(o, 'id');
	const current = ctx.before.stripeSubscriptionId;
	// A new subscription replaces a cancelled (or missing) one; otherwise only the current
	// subscription may change the shop.
	const adopt = created && (!current || ctx.before.status === 'canceled');
	if (current && id !== current && !adopt) {
		return `ignored: subscription ${id} is not the shop's current one (${current})`;
	}
	if (id && id !== current) ctx.changes.stripe_subscription_id = id;
	const customer = idOf(o, 'customer');
	if (customer && !ctx.before.stripeCustomerId) ctx.changes.stripe_customer_id = customer;
	const item = (obj(o, 'items')?.data as unknown[] | undefined)?.find(isObj);
	const price = obj(item, 'price');
	if (price) {
		const plan = planForPrice({
			id: str(price, 'id') ?? '',
			lookup_key: str(price, 'lookup_key') ?? null,
			metadata: (obj(price, 'metadata') as Record<string, string> | undefined) ?? null
		});
		if (!plan) return `ignored: price ${str(price, 'id')} is not one of our plans`;
		setPlan(ctx, plan);
	}
	const periodEnd = num(item, 'current_period_end') ?? num(o, 'current_period_end');
	if (periodEnd !== undefined) ctx.changes.current_period_end = toDate(periodEnd);
	const cancelAtEnd = o.cancel_at_period_end === true;
	ctx.changes.cancel_at_period_end = cancelAtEnd;
	if (cancelAtEnd !== ctx.before.cancelAtPeriodEnd) {
		ctx.audits.push({
			action: cancelAtEnd ? 'billing.cancel-scheduled' : 'billing.cancel-withdrawn',
			detail: periodEnd ? { ends: toDate(periodEnd)!.toISOString().slice(0, 10) } : {}
		});
	}
	const status = mapStatus(str(o, 'status'));
	if (status) setStatus(ctx, status);
	return `subscription ${str(o, 'status')}`;
}

function onSubscriptionDeleted(ctx: Ctx, o: Obj): string {
	const id = str(o, 'id');
	const current = ctx.before.stripeSubscriptionId;
	if (current && id !== current) {
		return `ignored: subscription ${id} is not the shop's current one (${current})`;
	}
	ctx.changes.cancel_at_period_end = false;
	setStatus(ctx, 'canceled');
	return 'subscription cancelled';
}

function invoiceSubscription(o: Obj): string | undefined {
	return (
		idOf(obj(obj(o, 'parent'), 'subscription_details'), 'subscription') ?? idOf(o, 'subscription')
	);
}

function onInvoicePaid(ctx: Ctx, o: Obj): string {
	const sub = invoiceSubscription(o);
	if (ctx.before.stripeSubscriptionId && sub !== ctx.before.stripeSubscriptionId) {
		return `ignored: invoice for subscription ${sub}, not the shop's current one`;
	}
	if (ctx.before.status === 'past_due') setStatus(ctx, 'active');
	ctx.audits.push({
		action: 'billing.payment-received',
		detail: {
			invoice: str(o, 'number') ?? str(o, 'id') ?? '',
			amount: num(o, 'amount_paid') ?? 0,
			currency: str(o, 'currency') ?? 'usd'
		}
	});
	return 'invoice paid';
}

function onPaymentFailed(ctx: Ctx, o: Obj): string {
	const sub = invoiceSubscription(o);
	if (ctx.before.stripeSubscriptionId && sub !== ctx.before.stripeSubscriptionId) {
		return `ignored: invoice for subscription ${sub}, not the shop's current one`;
	}
	if (ctx.before.status === 'canceled') return 'ignored: the subscription is already cancelled';
	setStatus(ctx, 'past_due');
	ctx.audits.push({
		action: 'billing.payment-failed',
		detail: {
			invoice: str(o, 'number') ?? str(o, 'id') ?? '',
			amount: num(o, 'amount_due') ?? 0,
			currency: str(o, 'currency') ?? 'usd'
		}
	});
	return 'payment failed';
}

async function upsertInvoice(
	trx: Knex.Transaction,
	shopId: number,
	o: Obj,
	createdAt: Date
): Promise<void> {
	const id = str(o, 'id');
	if (!id) return;
	const row = {
		shop_id: shopId,
		stripe_invoice_id: id,
		number: str(o, 'number') ?? '',
		status: str(o, 'status') ?? 'open',
		currency: str(o, 'currency') ?? 'usd',
		amount_due: num(o, 'amount_due') ?? 0,
		amount_paid: num(o, 'amount_paid') ?? 0,
		period_start: toDate(num(o, 'period_start')),
		period_end: toDate(num(o, 'period_end')),
		hosted_url: str(o, 'hosted_invoice_url') ?? null,
		issued_at: toDate(num(o, 'created')) ?? createdAt,
		event_created_at: createdAt
	};
	await trx('public.billing_invoices')
		.insert(row)
		.onConflict('stripe_invoice_id')
		.merge(['number', 'status', 'amount_due', 'amount_paid', 'hosted_url', 'event_created_at'])
		.where('public.billing_invoices.event_created_at', '<=', createdAt);
}

/** E-mails the shop's owners and admins that a payment failed (once per event and person). */
async function notifyPaymentFailed(
	knex: Knex,
	shopId: number,
	event: Pick<Stripe.Event, 'id'> & { data: { object: unknown } }
): Promise<void> {
	const shop = await knex('public.shops').where({ id: shopId }).first('name', 'slug');
	const people: { email: string; name: string }[] = await knex('public.memberships as m')
		.join('public.users as u', 'u.id', 'm.user_id')
		.where('m.shop_id', shopId)
		.whereIn('m.role', ['owner', 'admin'])
		.select('u.email', 'u.name');
	const o = isObj(event.data.object) ? event.data.object : {};
	const amount = num(o, 'amount_due');
	const currency = str(o, 'currency') ?? 'usd';
	const money =
		amount === undefined
			? 'the latest invoice'
			: new Intl.NumberFormat('en-US', { style: 'currency', currency }).format(amount / 100);
	const url = `${config.origin}/shops/${shop.slug}/billing`;
	for (const person of people) {
		const mail = renderEmail({
			subject: `Payment failed for ${shop.name} — Datumkeep`,
			paragraphs: [
				`Hello ${person.name},`,
				`The payment of ${money} for ${shop.name}'s Datumkeep subscription did not go through.`,
				`Everything keeps working for ${PAST_DUE_GRACE_DAYS} days. After that, new machines and setups are paused until the payment is made; no data is ever lost and offsets stay readable.`,
				'Update the payment card on the Billing page to settle it.'
			],
			action: { label: 'Open Billing', url }
		});
		await sendEmail(knex, {
			to: person.email,
			...mail,
			kind: 'billing.payment-failed',
			shopId,
			dedupeKey: `billing:payment-failed:${event.id}:${person.email.toLowerCase()}`
		});
	}
}
