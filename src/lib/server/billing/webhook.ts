/**
 * Stripe webhooks. The route hands over the raw body and signature; this module
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
import { audit } from '../audit';
import { config } from '../config';
import { enterShop, leaveShop } from '../db/roles';
import { getShopBilling } from './state';
import {
	onCheckoutCompleted,
	onInvoicePaid,
	onPaymentFailed,
	onSubscriptionChanged,
	onSubscriptionDeleted,
	upsertInvoice,
	type Ctx
} from './webhook-events';
import { notifyPaymentFailed } from './webhook-notify';
import { isObj, type Obj } from './webhook-object';
import { resolveShop } from './webhook-shop';

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
