import type { Knex } from 'knex';
import { isPlanKey, planByKey, type PlanKey } from '$lib/billing/plans';
import { planForPrice } from './stripe';
import type { ShopBilling, SubscriptionStatus } from './state';
import {
	idOf,
	invoiceSubscription,
	isObj,
	num,
	obj,
	str,
	toDate,
	type Obj
} from './webhook-object';

/**
 * What each handled Stripe event does to a shop's billing state. A handler reads the event's
 * object and the shop's state before it, and collects column changes and audit entries in the
 * context; webhook.ts writes them in the event's transaction. A handler's note starting with
 * "ignored:" means the event changes nothing.
 */
export interface Ctx {
	trx: Knex.Transaction;
	shopId: number;
	before: ShopBilling;
	createdAt: Date;
	changes: Record<string, unknown>;
	audits: { action: string; detail: Record<string, unknown> }[];
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

export function onCheckoutCompleted(ctx: Ctx, o: Obj): string {
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

export function onSubscriptionChanged(ctx: Ctx, o: Obj, created: boolean): string {
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

export function onSubscriptionDeleted(ctx: Ctx, o: Obj): string {
	const id = str(o, 'id');
	const current = ctx.before.stripeSubscriptionId;
	if (current && id !== current) {
		return `ignored: subscription ${id} is not the shop's current one (${current})`;
	}
	ctx.changes.cancel_at_period_end = false;
	setStatus(ctx, 'canceled');
	return 'subscription cancelled';
}

export function onInvoicePaid(ctx: Ctx, o: Obj): string {
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

export function onPaymentFailed(ctx: Ctx, o: Obj): string {
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

/** Keeps one row per invoice, newest event wins (guarded by its own event time). */
export async function upsertInvoice(
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
