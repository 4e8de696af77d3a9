/**
 * The `/v1` REST API of the fake: the calls Datumkeep makes through the Stripe SDK. Parameters
 * the fake does not model (proration_behavior, payment_behavior, …) are accepted and ignored, so
 * production code needs no special case for it.
 */
import {
	cancelNow,
	createCustomer,
	parseTrialDays,
	parseTrialEnd,
	updateSubscription
} from './billing';
import { StripeApiError, badParam, missing, missingParam } from './errors';
import { arr, obj, str, type FormObject } from './form';
import { expand, newId, paginate, type StripeState } from './state';
import type { CheckoutSession, Customer, Metadata, PortalSession, StripeEvent } from './types';

/** What a handler needs besides its parameters. */
export interface ApiContext {
	state: StripeState;
	/** Sends events without waiting: the API answers first, as Stripe does. */
	emit(events: StripeEvent[]): void;
}

type Handler = (ctx: ApiContext, params: FormObject, id: string) => unknown;

interface Route {
	method: string;
	pattern: RegExp;
	handler: Handler;
}

const ID = '([A-Za-z0-9_]+)';
const routes: Route[] = [];
function route(method: string, path: string, handler: Handler): void {
	routes.push({ method, pattern: new RegExp(`^${path.replace(':id', ID)}$`), handler });
}

/**
 * Runs the API call for `method` and `path` and returns the JSON body, with `expand` applied.
 * Throws {@link StripeApiError} for anything Stripe would refuse.
 */
export function handleApi(
	ctx: ApiContext,
	method: string,
	path: string,
	params: FormObject
): unknown {
	for (const r of routes) {
		if (r.method !== method) continue;
		const match = r.pattern.exec(path);
		if (!match) continue;
		const body = r.handler(ctx, params, match[1] ?? '');
		const paths = (arr(params, 'expand') ?? []).filter((p): p is string => typeof p === 'string');
		return paths.length ? expand(body, paths, ctx.state) : body;
	}
	throw new StripeApiError(
		404,
		'invalid_request_error',
		`Unrecognized request URL (${method}: ${path}). The local fake Stripe implements customers, products, prices, checkout sessions, billing portal sessions, subscriptions and invoices only.`
	);
}

// ---- customers ----

route('POST', '/v1/customers', (ctx, p) =>
	createCustomer(ctx.state, {
		email: str(p, 'email'),
		name: str(p, 'name'),
		description: str(p, 'description'),
		phone: str(p, 'phone'),
		metadata: metadataParam(p)
	})
);
route('GET', '/v1/customers', (ctx, p) => {
	const email = str(p, 'email');
	const all = [...ctx.state.customers.values()].reverse();
	return paginate(
		email ? all.filter((c) => c.email === email) : all,
		listQuery(p),
		'/v1/customers'
	);
});
route('GET', '/v1/customers/:id', (ctx, _p, id) => customer(ctx, id));
route('POST', '/v1/customers/:id', (ctx, p, id) => {
	const c = customer(ctx, id);
	for (const field of ['email', 'name', 'description', 'phone'] as const) {
		const value = str(p, field);
		// Stripe clears a field sent as an empty string.
		if (value !== undefined) c[field] = value === '' ? null : value;
	}
	const metadata = metadataParam(p);
	if (p.metadata === '') c.metadata = {};
	else if (metadata) c.metadata = mergeMetadata(c.metadata, metadata);
	return c;
});
route('DELETE', '/v1/customers/:id', (ctx, _p, id) => {
	customer(ctx, id);
	ctx.state.customers.delete(id);
	return { id, object: 'customer', deleted: true };
});

// ---- catalogue (fixed at start) ----

route('GET', '/v1/products', (ctx, p) =>
	paginate([...ctx.state.products.values()], listQuery(p), '/v1/products')
);
route('GET', '/v1/products/:id', (ctx, _p, id) => {
	const product = ctx.state.products.get(id);
	if (!product) throw missing('product', id);
	return product;
});
route('GET', '/v1/prices', (ctx, p) => {
	const product = str(p, 'product');
	const active = str(p, 'active');
	const keys = (arr(p, 'lookup_keys') ?? []).filter((k): k is string => typeof k === 'string');
	const list = [...ctx.state.prices.values()].filter(
		(price) =>
			(!product || price.product === product) &&
			(active === undefined || String(price.active) === active) &&
			(keys.length === 0 || (price.lookup_key !== null && keys.includes(price.lookup_key)))
	);
	return paginate(list, listQuery(p), '/v1/prices');
});
route('GET', '/v1/prices/:id', (ctx, _p, id) => {
	const price = ctx.state.prices.get(id);
	if (!price) throw missing('price', id);
	return price;
});

// ---- checkout ----

route('POST', '/v1/checkout/sessions', (ctx, p) => {
	const { state } = ctx;
	const mode = str(p, 'mode');
	if (mode !== 'subscription') {
		throw badParam(
			'mode',
			`The local fake Stripe supports mode 'subscription' only; got '${mode ?? '(none)'}'.`
		);
	}
	const successUrl = urlParam(p, 'success_url', true) as string;
	const cancelUrl = urlParam(p, 'cancel_url', false);
	const customerId = str(p, 'customer');
	const customerEmail = str(p, 'customer_email');
	if (customerId && customerEmail) {
		throw badParam('customer_email', 'Give either customer or customer_email, not both.');
	}
	if (customerId && !state.customers.has(customerId))
		throw missingParam('customer', customerId, 'customer');
	const lines = lineItems(ctx, p);
	const data = obj(p, 'subscription_data') ?? {};
	const trialDays = parseTrialDays(
		str(data, 'trial_period_days'),
		'subscription_data[trial_period_days]'
	);
	const trialEnd = parseTrialEnd(
		str(data, 'trial_end'),
		state.now(),
		'subscription_data[trial_end]'
	);
	if (trialEnd !== null && trialDays !== null) {
		throw badParam(
			'subscription_data[trial_end]',
			'Give either subscription_data[trial_end] or subscription_data[trial_period_days], not both.'
		);
	}
	const reference = str(p, 'client_reference_id');
	if (reference !== undefined && reference.length > 200) {
		throw badParam('client_reference_id', 'client_reference_id may be at most 200 characters.');
	}
	const prices = lines.map((line) => state.prices.get(line.price)!);
	const subtotal = lines.reduce((sum, line, i) => sum + prices[i].unit_amount * line.quantity, 0);
	const now = state.now();
	const id = newId('cs_test', 40);
	const session: CheckoutSession = {
		id,
		object: 'checkout.session',
		created: now,
		expires_at: now + 24 * 3600,
		mode: 'subscription',
		status: 'open',
		payment_status: 'unpaid',
		url: `${state.publicUrl}/checkout/${id}`,
		success_url: successUrl,
		cancel_url: cancelUrl ?? null,
		customer: customerId ?? null,
		customer_email: customerEmail ?? null,
		client_reference_id: reference ?? null,
		subscription: null,
		invoice: null,
		currency: prices[0].currency,
		amount_subtotal: subtotal,
		// Nothing is due today when the subscription starts with a trial.
		amount_total: trialDays || trialEnd ? 0 : subtotal,
		metadata: metadataParam(p) ?? {},
		livemode: false
	};
	state.sessions.set(id, session);
	state.sessionExtras.set(id, {
		lines,
		trialDays,
		trialEnd,
		subscriptionMetadata: metadataParam(data) ?? {},
		lastError: null
	});
	return session;
});
route('GET', '/v1/checkout/sessions/:id', (ctx, _p, id) => checkoutSession(ctx, id));
route('POST', '/v1/checkout/sessions/:id/expire', (ctx, _p, id) => {
	const session = checkoutSession(ctx, id);
	if (session.status !== 'open') {
		throw badParam(
			'session',
			`Only an open checkout session can be expired; this one is ${session.status}.`
		);
	}
	Object.assign(session, { status: 'expired', url: null });
	return session;
});

// ---- billing portal ----

route('POST', '/v1/billing_portal/sessions', (ctx, p) => {
	const customerId = str(p, 'customer');
	if (!customerId) throw badParam('customer', 'customer is required for a billing portal session.');
	if (!ctx.state.customers.has(customerId)) throw missingParam('customer', customerId, 'customer');
	const id = newId('bps');
	const session: PortalSession = {
		id,
		object: 'billing_portal.session',
		created: ctx.state.now(),
		customer: customerId,
		return_url: urlParam(p, 'return_url', false) ?? null,
		url: `${ctx.state.publicUrl}/portal/${id}`,
		livemode: false
	};
	ctx.state.portalSessions.set(id, session);
	return session;
});

// ---- subscriptions ----

route('GET', '/v1/subscriptions', (ctx, p) => {
	const customerId = str(p, 'customer');
	const price = str(p, 'price');
	const status = str(p, 'status');
	const list = [...ctx.state.subscriptions.values()].reverse().filter(
		(sub) =>
			(!customerId || sub.customer === customerId) &&
			(!price || sub.items.data.some((item) => item.price.id === price)) &&
			// Like Stripe: without a status filter, canceled subscriptions are left out.
			(status === 'all' || (status ? sub.status === status : sub.status !== 'canceled'))
	);
	return paginate(list, listQuery(p), '/v1/subscriptions');
});
route('GET', '/v1/subscriptions/:id', (ctx, _p, id) => subscription(ctx, id));
route('POST', '/v1/subscriptions/:id', (ctx, p, id) => {
	const sub = subscription(ctx, id);
	const items = arr(p, 'items') ?? [];
	let price: string | undefined;
	if (items.length > 1) {
		throw badParam(
			'items',
			'The local fake Stripe models one item per subscription; send at most one entry in items.'
		);
	}
	const item = items[0];
	if (item !== undefined) {
		if (typeof item !== 'object' || Array.isArray(item))
			throw badParam('items[0]', 'items[0] must be an object.');
		const itemId = str(item, 'id');
		if (itemId && itemId !== sub.items.data[0].id)
			throw missingParam('subscription item', itemId, 'items[0][id]');
		price = str(item, 'price');
	}
	const cancel = str(p, 'cancel_at_period_end');
	const trialEnd = str(p, 'trial_end');
	if (trialEnd !== undefined && trialEnd !== 'now') {
		throw badParam('trial_end', 'The local fake Stripe understands trial_end=now only.');
	}
	const events = updateSubscription(
		ctx.state,
		sub,
		{
			price,
			cancelAtPeriodEnd:
				cancel === undefined ? undefined : boolParam(cancel, 'cancel_at_period_end'),
			// `metadata=` clears everything: turn it into "remove each current key".
			metadata:
				p.metadata === ''
					? Object.fromEntries(Object.keys(sub.metadata).map((key) => [key, '']))
					: metadataParam(p),
			endTrial: trialEnd === 'now'
		},
		'items[0][price]'
	);
	ctx.emit(events);
	return sub;
});
route('DELETE', '/v1/subscriptions/:id', (ctx, _p, id) => {
	const sub = subscription(ctx, id);
	ctx.emit([cancelNow(ctx.state, sub)]);
	return sub;
});

// ---- invoices ----

route('GET', '/v1/invoices', (ctx, p) => {
	const customerId = str(p, 'customer');
	const subId = str(p, 'subscription');
	const status = str(p, 'status');
	const list = [...ctx.state.invoices.values()]
		.reverse()
		.filter(
			(inv) =>
				(!customerId || inv.customer === customerId) &&
				(!subId || inv.parent.subscription_details.subscription === subId) &&
				(!status || inv.status === status)
		);
	return paginate(list, listQuery(p), '/v1/invoices');
});
route('GET', '/v1/invoices/:id', (ctx, _p, id) => {
	const invoice = ctx.state.invoices.get(id);
	if (!invoice) throw missing('invoice', id);
	return invoice;
});

// ---- helpers ----

function customer(ctx: ApiContext, id: string): Customer {
	const found = ctx.state.customers.get(id);
	if (!found) throw missing('customer', id);
	return found;
}

function checkoutSession(ctx: ApiContext, id: string): CheckoutSession {
	const found = ctx.state.sessions.get(id);
	if (!found) throw missing('checkout.session', id);
	return found;
}

function subscription(ctx: ApiContext, id: string) {
	const found = ctx.state.subscriptions.get(id);
	if (!found) throw missing('subscription', id);
	return found;
}

function lineItems(ctx: ApiContext, p: FormObject): Array<{ price: string; quantity: number }> {
	const raw = arr(p, 'line_items');
	if (!raw || raw.length === 0) {
		throw badParam(
			'line_items',
			'line_items is required in subscription mode: give at least one { price, quantity }.'
		);
	}
	return raw.map((entry, i) => {
		const param = `line_items[${i}]`;
		if (typeof entry !== 'object' || Array.isArray(entry))
			throw badParam(param, `${param} must be an object.`);
		if (obj(entry, 'price_data')) {
			throw badParam(
				`${param}[price_data]`,
				'The local fake Stripe knows only its fixed catalogue; pass a price id, not price_data.'
			);
		}
		const price = str(entry, 'price');
		if (!price) throw badParam(`${param}[price]`, `${param}[price] is required.`);
		if (!ctx.state.prices.has(price)) throw missingParam('price', price, `${param}[price]`);
		const quantityText = str(entry, 'quantity') ?? '1';
		const quantity = Number(quantityText);
		if (!Number.isInteger(quantity) || quantity < 1) {
			throw badParam(
				`${param}[quantity]`,
				`${param}[quantity] must be a whole number of at least 1; got '${quantityText}'.`
			);
		}
		return { price, quantity };
	});
}

function urlParam(p: FormObject, name: string, required: boolean): string | undefined {
	const value = str(p, name);
	if (value === undefined || value === '') {
		if (required) throw badParam(name, `${name} is required.`);
		return undefined;
	}
	// The placeholder is not valid in a URL as is; check the URL with it filled in.
	const probe = value.replaceAll('{CHECKOUT_SESSION_ID}', 'cs_test_probe');
	let parsed: URL;
	try {
		parsed = new URL(probe);
	} catch {
		throw badParam(name, `${name} must be an absolute URL; got '${value}'.`);
	}
	if (parsed.protocol !== 'http:' && parsed.protocol !== 'https:') {
		throw badParam(name, `${name} must be an http or https URL; got '${value}'.`);
	}
	return value;
}

function metadataParam(p: FormObject): Metadata | undefined {
	const raw = p.metadata;
	if (raw === undefined) return undefined;
	// `metadata=` (empty string) is how the SDK asks to clear all metadata.
	if (raw === '') return {};
	if (typeof raw !== 'object' || Array.isArray(raw))
		throw badParam('metadata', 'metadata must be a set of key-value pairs.');
	const out: Metadata = {};
	for (const [key, value] of Object.entries(raw)) {
		if (typeof value !== 'string')
			throw badParam(`metadata[${key}]`, 'metadata values must be strings.');
		out[key] = value;
	}
	return out;
}

function mergeMetadata(current: Metadata, changes: Metadata): Metadata {
	const next = { ...current };
	for (const [key, value] of Object.entries(changes)) {
		if (value === '') delete next[key];
		else next[key] = value;
	}
	return next;
}

function boolParam(value: string, name: string): boolean {
	if (value === 'true') return true;
	if (value === 'false') return false;
	throw badParam(name, `${name} must be true or false; got '${value}'.`);
}

function listQuery(p: FormObject): {
	limit?: string;
	starting_after?: string;
	ending_before?: string;
} {
	return {
		limit: str(p, 'limit'),
		starting_after: str(p, 'starting_after'),
		ending_before: str(p, 'ending_before')
	};
}
