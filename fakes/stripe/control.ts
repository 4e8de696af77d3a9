/**
 * `/_fake/…`: the control API tests use to drive the fake — trigger events with a chosen
 * delivery (normal, twice, reversed), read the delivery log, move the clock, reset. Plain JSON in
 * and out; it is not part of Stripe's API.
 */
import { advanceClock, cancelNow, failPayment, payInvoice, updateSubscription } from './billing';
import { StripeApiError } from './errors';
import type { StripeState } from './state';
import type { Metadata, StripeEvent, Subscription, SubscriptionStatus } from './types';
import { outcome, type DeliveryMode, type EventRecord, type WebhookSender } from './webhooks';

/** Event types a test can trigger for a subscription. */
export const TRIGGERS = [
	'customer.subscription.updated',
	'customer.subscription.deleted',
	'invoice.payment_failed',
	'invoice.paid'
] as const;
type Trigger = (typeof TRIGGERS)[number];

/** One step of `POST /_fake/events`. */
interface Step {
	type: Trigger;
	/** For `customer.subscription.updated`: what to change (all optional). */
	changes?: {
		status?: SubscriptionStatus;
		price?: string;
		cancel_at_period_end?: boolean;
		metadata?: Metadata;
	};
}

/** Answer of a control call: status and JSON body. */
export interface ControlResult {
	status: number;
	body: unknown;
}

/** Handles a `/_fake/…` request; null when no control route matches. */
export async function handleControl(
	state: StripeState,
	webhooks: WebhookSender,
	method: string,
	path: string,
	rawBody: string
): Promise<ControlResult | null> {
	const hasEndpoint = Boolean(webhooks.settings.url);
	if (path === '/_fake/events' && method === 'GET') {
		return { status: 200, body: { data: webhooks.records.map((r) => summary(r, hasEndpoint)) } };
	}
	if (path === '/_fake/events' && method === 'POST') {
		const input = parseJson(rawBody);
		if ('error' in input) return input.error;
		return trigger(state, webhooks, input.value, hasEndpoint);
	}
	if (path === '/_fake/clock' && method === 'GET') {
		return { status: 200, body: { now: state.now() } };
	}
	if (path === '/_fake/clock/advance' && method === 'POST') {
		const input = parseJson(rawBody);
		if ('error' in input) return input.error;
		const seconds = Number(input.value.seconds ?? 0) + Number(input.value.days ?? 0) * 86_400;
		if (!Number.isFinite(seconds) || seconds <= 0) {
			return fail(
				'give a positive "seconds" or "days" to move the clock forward (it never goes back)'
			);
		}
		const events = advanceClock(state, Math.round(seconds));
		const records = await webhooks.send(events);
		return {
			status: 200,
			body: { now: state.now(), events: records.map((r) => summary(r, hasEndpoint)) }
		};
	}
	if (path === '/_fake/state' && method === 'GET') {
		return {
			status: 200,
			body: {
				now: state.now(),
				customers: [...state.customers.values()],
				checkoutSessions: [...state.sessions.values()],
				subscriptions: [...state.subscriptions.values()],
				invoices: [...state.invoices.values()]
			}
		};
	}
	if (path === '/_fake/reset' && method === 'POST') {
		state.reset();
		webhooks.clear();
		return { status: 204, body: null };
	}
	return null;
}

async function trigger(
	state: StripeState,
	webhooks: WebhookSender,
	input: Record<string, unknown>,
	hasEndpoint: boolean
): Promise<ControlResult> {
	const sub = state.subscriptions.get(String(input.subscription ?? ''));
	if (!sub)
		return fail(
			`"subscription" must name a subscription the fake knows; got ${JSON.stringify(input.subscription)}`,
			404
		);
	const deliver = (input.deliver ?? 'normal') as DeliveryMode;
	if (!['normal', 'twice', 'reversed'].includes(deliver)) {
		return fail(
			`"deliver" must be "normal", "twice" or "reversed"; got ${JSON.stringify(deliver)}`
		);
	}
	const steps = (
		Array.isArray(input.steps) ? input.steps : [{ type: input.type, changes: input.changes }]
	) as Step[];
	for (const step of steps) {
		if (!TRIGGERS.includes(step?.type)) {
			return fail(
				`each event "type" must be one of ${TRIGGERS.join(', ')}; got ${JSON.stringify(step?.type)}`
			);
		}
	}
	// Each step changes the state first, so a batch tells a consistent story in `created` order;
	// only the delivery order is then bent by `deliver`.
	const events: StripeEvent[] = [];
	try {
		for (const step of steps) events.push(...applyStep(state, sub, step));
	} catch (err) {
		if (err instanceof StripeApiError) return fail(err.message, err.status);
		throw err;
	}
	const records = await webhooks.send(events, deliver);
	return { status: 200, body: { events: records.map((r) => summary(r, hasEndpoint)) } };
}

function applyStep(state: StripeState, sub: Subscription, step: Step): StripeEvent[] {
	switch (step.type) {
		case 'customer.subscription.updated': {
			const c = step.changes ?? {};
			return updateSubscription(
				state,
				sub,
				{
					status: c.status,
					price: c.price,
					cancelAtPeriodEnd: c.cancel_at_period_end,
					metadata: c.metadata
				},
				'changes.price'
			);
		}
		case 'customer.subscription.deleted':
			return [cancelNow(state, sub)];
		case 'invoice.payment_failed':
			return [failPayment(state, sub)];
		case 'invoice.paid':
			return [payInvoice(state, sub)];
	}
}

function summary(record: EventRecord, hasEndpoint: boolean) {
	const object = record.event.data.object;
	const subscription =
		object.object === 'subscription'
			? object.id
			: object.object === 'invoice'
				? object.parent.subscription_details.subscription
				: object.subscription;
	return {
		id: record.event.id,
		type: record.event.type,
		created: record.event.created,
		subscription: typeof subscription === 'string' ? subscription : (subscription?.id ?? null),
		mode: record.mode,
		outcome: outcome(record, hasEndpoint),
		attempts: record.attempts,
		event: record.event
	};
}

function parseJson(text: string): { value: Record<string, unknown> } | { error: ControlResult } {
	if (!text.trim()) return { value: {} };
	try {
		const value: unknown = JSON.parse(text);
		if (value && typeof value === 'object' && !Array.isArray(value))
			return { value: value as Record<string, unknown> };
	} catch {
		// fall through to the message below
	}
	return { error: fail('the body must be a JSON object') };
}

function fail(message: string, status = 400): ControlResult {
	return { status, body: { error: message } };
}
