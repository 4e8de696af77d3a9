/**
 * The billing behaviour of the fake: what happens to customers, subscriptions and invoices when
 * a checkout is paid, a plan changes, a payment fails or time passes. Each operation changes the
 * state and returns the events Stripe would send; delivering them is the caller's job.
 */
import { StripeApiError, badParam, missingParam } from './errors';
import { addInterval, newId, type SessionExtras, type StripeState } from './state';
import type {
	Customer,
	Invoice,
	Metadata,
	StripeEvent,
	Subscription,
	SubscriptionItem,
	SubscriptionStatus
} from './types';

/** Test card that pays. */
export const CARD_OK = '4242424242424242';
/** Test card that is declined. */
export const CARD_DECLINED = '4000000000000002';

/** Stripe caps a checkout trial at 730 days; more is almost surely a unit mistake in the app. */
const MAX_TRIAL_DAYS = 730;

/** Creates and stores a customer. */
export function createCustomer(
	state: StripeState,
	fields: {
		email?: string;
		name?: string;
		description?: string;
		phone?: string;
		metadata?: Metadata;
	}
): Customer {
	const customer: Customer = {
		id: newId('cus', 14),
		object: 'customer',
		created: state.now(),
		email: fields.email ?? null,
		name: fields.name ?? null,
		description: fields.description ?? null,
		phone: fields.phone ?? null,
		metadata: { ...fields.metadata },
		livemode: false
	};
	state.customers.set(customer.id, customer);
	return customer;
}

/** Checks a trial length given to the API. */
export function parseTrialDays(value: string | undefined, param: string): number | null {
	if (value === undefined || value === '') return null;
	const days = Number(value);
	if (!Number.isInteger(days) || days < 1 || days > MAX_TRIAL_DAYS) {
		throw badParam(
			param,
			`${param} must be a whole number of days from 1 to ${MAX_TRIAL_DAYS}; got '${value}'.`
		);
	}
	return days;
}

/**
 * Checks `trial_end` given as a Unix time. Stripe's Checkout wants it at least 48 hours ahead
 * (and within two years); the fake refuses the same, so the app meets the real rule.
 */
export function parseTrialEnd(
	value: string | undefined,
	now: number,
	param: string
): number | null {
	if (value === undefined || value === '') return null;
	const at = Number(value);
	if (!Number.isInteger(at)) {
		throw badParam(param, `${param} must be a Unix timestamp in seconds; got '${value}'.`);
	}
	if (at < now + 48 * 3600) {
		throw badParam(param, `${param} must be at least 48 hours in the future; got ${value}.`);
	}
	if (at > now + MAX_TRIAL_DAYS * 86_400) {
		throw badParam(param, `${param} must be within ${MAX_TRIAL_DAYS} days; got ${value}.`);
	}
	return at;
}

/** Outcome of paying on the stand-in checkout page. */
export type CheckoutResult =
	{ ok: true; redirectTo: string; events: StripeEvent[] } | { ok: false; message: string };

/**
 * Pays a checkout session with a test card. The good card creates the subscription (trialing
 * when the session asked for a trial) and its paid first invoice; any other card changes nothing.
 */
export function completeCheckout(
	state: StripeState,
	sessionId: string,
	cardNumber: string,
	email: string | undefined
): CheckoutResult {
	const session = state.sessions.get(sessionId);
	const extras = state.sessionExtras.get(sessionId);
	if (!session || !extras) return { ok: false, message: 'This checkout does not exist.' };
	if (session.status !== 'open') return { ok: false, message: 'This checkout is no longer open.' };
	const card = cardNumber.replace(/[\s-]/g, '');
	const message =
		card === CARD_DECLINED
			? 'Your card was declined.'
			: card === CARD_OK
				? null
				: 'This stand-in only knows two test cards: 4242 4242 4242 4242 (pays) and 4000 0000 0000 0002 (declined).';
	if (message) {
		extras.lastError = message;
		return { ok: false, message };
	}

	let customerId = typeof session.customer === 'string' ? session.customer : null;
	if (!customerId) {
		customerId = createCustomer(state, { email: session.customer_email ?? email }).id;
	}
	const { subscription, invoice } = createSubscription(state, customerId, extras);
	Object.assign(session, {
		status: 'complete',
		payment_status: extras.trialDays || extras.trialEnd ? 'no_payment_required' : 'paid',
		customer: customerId,
		subscription: subscription.id,
		invoice: invoice.id,
		url: null
	});
	extras.lastError = null;
	return {
		ok: true,
		redirectTo: session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', session.id),
		events: [
			state.event('checkout.session.completed', session),
			state.event('customer.subscription.created', subscription),
			state.event('invoice.paid', invoice)
		]
	};
}

function createSubscription(
	state: StripeState,
	customerId: string,
	extras: SessionExtras
): { subscription: Subscription; invoice: Invoice } {
	const now = state.now();
	const id = newId('sub');
	const first = state.prices.get(extras.lines[0].price);
	if (!first) throw missingParam('price', extras.lines[0].price, 'line_items[0][price]');
	const trialEnd = extras.trialEnd ?? (extras.trialDays ? now + extras.trialDays * 86_400 : null);
	const periodEnd = trialEnd ?? addInterval(now, first.recurring.interval);
	const items: SubscriptionItem[] = extras.lines.map((line) => {
		const price = state.prices.get(line.price);
		if (!price) throw missingParam('price', line.price, 'line_items[][price]');
		return {
			id: newId('si', 14),
			object: 'subscription_item',
			created: now,
			subscription: id,
			price: structuredClone(price),
			quantity: line.quantity,
			current_period_start: now,
			current_period_end: periodEnd,
			metadata: {}
		};
	});
	const subscription: Subscription = {
		id,
		object: 'subscription',
		created: now,
		customer: customerId,
		status: trialEnd ? 'trialing' : 'active',
		items: {
			object: 'list',
			data: items,
			has_more: false,
			url: `/v1/subscription_items?subscription=${id}`
		},
		currency: first.currency,
		start_date: now,
		billing_cycle_anchor: periodEnd,
		cancel_at_period_end: false,
		cancel_at: null,
		canceled_at: null,
		ended_at: null,
		trial_start: trialEnd ? now : null,
		trial_end: trialEnd,
		latest_invoice: null,
		collection_method: 'charge_automatically',
		metadata: { ...extras.subscriptionMetadata },
		livemode: false
	};
	state.subscriptions.set(id, subscription);
	// A trial starts with a zero invoice, as Stripe does, so "paid invoice" holds in both cases.
	const invoice = createInvoice(state, subscription, 'subscription_create', {
		paid: true,
		free: trialEnd !== null
	});
	return { subscription, invoice };
}

/** Creates an invoice for the subscription's current period and makes it the latest one. */
function createInvoice(
	state: StripeState,
	sub: Subscription,
	reason: Invoice['billing_reason'],
	how: { paid: boolean; free?: boolean }
): Invoice {
	const now = state.now();
	const { start, end } = period(sub);
	const id = newId('in');
	const lines = sub.items.data.map((item) => ({
		id: newId('il', 14),
		object: 'line_item' as const,
		amount: how.free ? 0 : item.price.unit_amount * item.quantity,
		currency: item.price.currency,
		description: `${item.quantity} × ${item.price.nickname ?? item.price.id}${how.free ? ' (trial)' : ''}`,
		quantity: item.quantity,
		period: { start, end },
		pricing: {
			type: 'price_details' as const,
			price_details: { price: item.price.id, product: String(item.price.product) }
		}
	}));
	const total = lines.reduce((sum, line) => sum + line.amount, 0);
	const invoice: Invoice = {
		id,
		object: 'invoice',
		created: now,
		customer: typeof sub.customer === 'string' ? sub.customer : sub.customer.id,
		status: how.paid ? 'paid' : 'open',
		number: state.nextInvoiceNumber(),
		currency: sub.currency,
		amount_due: total,
		amount_paid: how.paid ? total : 0,
		amount_remaining: how.paid ? 0 : total,
		subtotal: total,
		total,
		attempt_count: 1,
		attempted: true,
		billing_reason: reason,
		period_start: start,
		period_end: end,
		// Stripe's smart retries would try again in a few days; the fake only reports the date.
		next_payment_attempt: how.paid ? null : now + 3 * 86_400,
		hosted_invoice_url: `${state.publicUrl}/invoices/${id}`,
		invoice_pdf: null,
		lines: { object: 'list', data: lines, has_more: false, url: `/v1/invoices/${id}/lines` },
		parent: {
			type: 'subscription_details',
			quote_details: null,
			subscription_details: { subscription: sub.id, metadata: { ...sub.metadata } }
		},
		status_transitions: { finalized_at: now, paid_at: how.paid ? now : null },
		metadata: {},
		livemode: false
	};
	state.invoices.set(id, invoice);
	sub.latest_invoice = id;
	return invoice;
}

/** The billing period, which this API version keeps on the items. */
export function period(sub: Subscription): { start: number; end: number } {
	const item = sub.items.data[0];
	return { start: item.current_period_start, end: item.current_period_end };
}

function setPeriod(sub: Subscription, start: number, end: number): void {
	for (const item of sub.items.data) {
		item.current_period_start = start;
		item.current_period_end = end;
	}
	sub.billing_cycle_anchor = end;
}

/** Runs `change` on the subscription and returns `customer.subscription.updated` with what changed. */
function updated(state: StripeState, sub: Subscription, change: () => void): StripeEvent {
	const before = structuredClone(sub) as unknown as Record<string, unknown>;
	change();
	const after = sub as unknown as Record<string, unknown>;
	const previous: Record<string, unknown> = {};
	for (const key of Object.keys(after)) {
		if (JSON.stringify(before[key]) !== JSON.stringify(after[key])) previous[key] = before[key];
	}
	return state.event('customer.subscription.updated', sub, previous);
}

function assertNotCanceled(sub: Subscription): void {
	if (sub.status === 'canceled') {
		throw new StripeApiError(
			400,
			'invalid_request_error',
			`Subscription ${sub.id} is canceled; a canceled subscription cannot be changed. Start a new checkout instead.`
		);
	}
}

/** Changes asked of a subscription through the API, the portal or a test trigger. */
export interface SubscriptionUpdate {
	/** New catalogue price for the (single) item. */
	price?: string;
	cancelAtPeriodEnd?: boolean;
	/** Merged in; an empty value removes a key, as in Stripe. */
	metadata?: Metadata;
	/** Forced status; only test triggers set this. */
	status?: SubscriptionStatus;
	/** `trial_end=now`: the first paid period starts at once. */
	endTrial?: boolean;
}

/**
 * Applies all changes of one request at once and returns one `customer.subscription.updated`
 * (as Stripe sends one per call), plus `invoice.paid` when a trial was ended.
 * `priceParam` names the parameter in error messages.
 */
export function updateSubscription(
	state: StripeState,
	sub: Subscription,
	update: SubscriptionUpdate,
	priceParam = 'price'
): StripeEvent[] {
	// Stripe still lets metadata change on a canceled subscription; nothing else.
	const onlyMetadata = Object.entries(update).every(
		([key, value]) => key === 'metadata' || value === undefined
	);
	if (!onlyMetadata) assertNotCanceled(sub);
	const price = update.price === undefined ? undefined : state.prices.get(update.price);
	if (update.price !== undefined && !price) throw missingParam('price', update.price, priceParam);
	let invoice: Invoice | undefined;
	const event = updated(state, sub, () => {
		if (price) sub.items.data[0].price = structuredClone(price);
		if (update.cancelAtPeriodEnd !== undefined) {
			sub.cancel_at_period_end = update.cancelAtPeriodEnd;
			sub.cancel_at = update.cancelAtPeriodEnd ? period(sub).end : null;
			sub.canceled_at = update.cancelAtPeriodEnd ? state.now() : null;
		}
		if (update.metadata) {
			const next = { ...sub.metadata };
			for (const [key, value] of Object.entries(update.metadata)) {
				if (value === '') delete next[key];
				else next[key] = value;
			}
			sub.metadata = next;
		}
		if (update.status) sub.status = update.status;
		if (update.endTrial && sub.status === 'trialing') {
			const now = state.now();
			sub.status = 'active';
			sub.trial_end = now;
			setPeriod(sub, now, addInterval(now, sub.items.data[0].price.recurring.interval));
			invoice = createInvoice(state, sub, 'subscription_update', { paid: true });
		}
	});
	return invoice ? [event, state.event('invoice.paid', invoice)] : [event];
}

/** Cancels at once (the SDK's `subscriptions.cancel`). */
export function cancelNow(state: StripeState, sub: Subscription): StripeEvent {
	assertNotCanceled(sub);
	const now = state.now();
	sub.status = 'canceled';
	sub.canceled_at = sub.canceled_at ?? now;
	sub.ended_at = now;
	sub.cancel_at_period_end = false;
	return state.event('customer.subscription.deleted', sub);
}

/** A renewal payment fails: the next period gets an open invoice and the subscription goes past due. */
export function failPayment(state: StripeState, sub: Subscription): StripeEvent {
	assertNotCanceled(sub);
	// Stripe moves on to the next period even when its payment fails; the invoice stays open.
	const { end } = period(sub);
	setPeriod(sub, end, addInterval(end, sub.items.data[0].price.recurring.interval));
	const invoice = createInvoice(state, sub, 'subscription_cycle', { paid: false });
	sub.status = 'past_due';
	return state.event('invoice.payment_failed', invoice);
}

/**
 * A payment succeeds: settles the open latest invoice if there is one (a recovered payment),
 * otherwise bills the next period. The subscription becomes active either way.
 */
export function payInvoice(state: StripeState, sub: Subscription): StripeEvent {
	assertNotCanceled(sub);
	const latest =
		typeof sub.latest_invoice === 'string' ? state.invoices.get(sub.latest_invoice) : undefined;
	let invoice: Invoice;
	if (latest && latest.status === 'open') {
		invoice = latest;
		Object.assign(invoice, {
			status: 'paid',
			amount_paid: invoice.amount_due,
			amount_remaining: 0,
			attempt_count: invoice.attempt_count + 1,
			next_payment_attempt: null
		});
		invoice.status_transitions.paid_at = state.now();
	} else {
		const { end } = period(sub);
		setPeriod(sub, end, addInterval(end, sub.items.data[0].price.recurring.interval));
		invoice = createInvoice(state, sub, 'subscription_cycle', { paid: true });
	}
	sub.status = 'active';
	return state.event('invoice.paid', invoice);
}

/**
 * Moves the clock forward and lets each live subscription reach its period ends: a trial or
 * period that ends renews with a paid invoice, one set to cancel at period end is canceled.
 * Past-due subscriptions are left as they are; a test settles them with an `invoice.paid` or
 * `customer.subscription.deleted` trigger.
 */
export function advanceClock(state: StripeState, seconds: number): StripeEvent[] {
	state.advance(seconds);
	const events: StripeEvent[] = [];
	const now = state.now();
	for (const sub of state.subscriptions.values()) {
		// Bounded so that advancing by years cannot loop for long.
		for (let i = 0; i < 120 && sub.status !== 'canceled' && period(sub).end <= now; i++) {
			if (sub.cancel_at_period_end) {
				const end = period(sub).end;
				sub.status = 'canceled';
				sub.ended_at = end;
				sub.canceled_at = sub.canceled_at ?? end;
				events.push(state.event('customer.subscription.deleted', sub));
				break;
			}
			if (sub.status !== 'active' && sub.status !== 'trialing') break;
			let invoice: Invoice | undefined;
			events.push(
				updated(state, sub, () => {
					const { end } = period(sub);
					sub.status = 'active';
					setPeriod(sub, end, addInterval(end, sub.items.data[0].price.recurring.interval));
					invoice = createInvoice(state, sub, 'subscription_cycle', { paid: true });
				})
			);
			events.push(state.event('invoice.paid', invoice as Invoice));
		}
	}
	return events;
}
