/**
 * In-memory state of the fake Stripe: the stores, a clock that tests can move forward, ids, and
 * the generic list/expand behaviour of the API. Everything is lost on restart, which is fine for
 * a fake: the app's database is the record, Stripe is only asked to confirm it.
 */
import { randomBytes } from 'node:crypto';
import Stripe from 'stripe';
import type {
	CataloguePrice,
	CheckoutSession,
	Customer,
	EventObject,
	EventType,
	Interval,
	Invoice,
	List,
	PortalSession,
	Price,
	Product,
	StripeEvent,
	Subscription
} from './types';

/** Written into events: the version the installed SDK pins, so the app sees what it expects. */
const API_VERSION: string = Stripe.API_VERSION;

const ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz';

/** A Stripe-looking id: prefix plus random base-62 characters. */
export function newId(prefix: string, length = 24): string {
	const bytes = randomBytes(length);
	let out = '';
	for (const byte of bytes) out += ALPHABET[byte % ALPHABET.length];
	return `${prefix}_${out}`;
}

/** What a checkout session remembers but does not show in its JSON. */
export interface SessionExtras {
	lines: Array<{ price: string; quantity: number }>;
	trialDays: number | null;
	/** `subscription_data[trial_end]`: the trial's end as a Unix time, instead of a length. */
	trialEnd: number | null;
	subscriptionMetadata: Record<string, string>;
	/** Last card error shown on the page, so a reload still explains what happened. */
	lastError: string | null;
}

/** All state of one fake Stripe instance. */
export class StripeState {
	readonly customers = new Map<string, Customer>();
	readonly products = new Map<string, Product>();
	readonly prices = new Map<string, Price>();
	readonly sessions = new Map<string, CheckoutSession>();
	readonly sessionExtras = new Map<string, SessionExtras>();
	readonly portalSessions = new Map<string, PortalSession>();
	readonly subscriptions = new Map<string, Subscription>();
	readonly invoices = new Map<string, Invoice>();
	/** Responses to POSTs by Idempotency-Key, so a retried request does not act twice. */
	readonly idempotent = new Map<string, { status: number; body: unknown }>();
	private clockOffset = 0;
	private lastEventCreated = 0;
	private invoiceCounter = 0;

	constructor(
		catalogue: CataloguePrice[],
		readonly publicUrl: string
	) {
		this.loadCatalogue(catalogue);
	}

	/** Current fake time in Unix seconds (real time plus whatever the clock was advanced by). */
	now(): number {
		return Math.floor(Date.now() / 1000) + this.clockOffset;
	}

	/** Moves the fake clock forward. */
	advance(seconds: number): void {
		this.clockOffset += seconds;
	}

	/** Next invoice number, in a series of our own. */
	nextInvoiceNumber(): string {
		this.invoiceCounter += 1;
		return `DKF-${String(this.invoiceCounter).padStart(4, '0')}`;
	}

	/**
	 * Builds an event. `created` is made strictly increasing, even within one second, because the
	 * app orders events by `created` to ignore stale ones; ties would make the fake's own order
	 * tests meaningless. The object is snapshotted so later changes do not leak into old events.
	 */
	event(type: EventType, object: EventObject, previous?: Record<string, unknown>): StripeEvent {
		const created = Math.max(this.now(), this.lastEventCreated + 1);
		this.lastEventCreated = created;
		return {
			id: newId('evt'),
			object: 'event',
			type,
			created,
			api_version: API_VERSION,
			livemode: false,
			pending_webhooks: 1,
			request: { id: null, idempotency_key: null },
			data: {
				object: structuredClone(object),
				...(previous ? { previous_attributes: structuredClone(previous) } : {})
			}
		};
	}

	/** Finds any stored object by id (used by `expand`). */
	lookup(id: string): object | undefined {
		return (
			this.customers.get(id) ??
			this.products.get(id) ??
			this.prices.get(id) ??
			this.sessions.get(id) ??
			this.subscriptions.get(id) ??
			this.invoices.get(id)
		);
	}

	/** Forgets everything the API created; the catalogue and the clock stay. */
	reset(): void {
		for (const map of [
			this.customers,
			this.sessions,
			this.sessionExtras,
			this.portalSessions,
			this.subscriptions,
			this.invoices,
			this.idempotent
		]) {
			map.clear();
		}
		this.invoiceCounter = 0;
	}

	private loadCatalogue(catalogue: CataloguePrice[]): void {
		const created = this.now();
		for (const entry of catalogue) {
			const productId = entry.productId ?? `prod_${entry.id.replace(/^price_/, '')}`;
			if (!this.products.has(productId)) {
				this.products.set(productId, {
					id: productId,
					object: 'product',
					created,
					name: entry.productName,
					active: true,
					description: null,
					metadata: { ...entry.metadata },
					livemode: false
				});
			}
			this.prices.set(entry.id, {
				id: entry.id,
				object: 'price',
				created,
				active: true,
				currency: (entry.currency ?? 'usd').toLowerCase(),
				unit_amount: entry.unit_amount,
				nickname: entry.productName,
				lookup_key: entry.lookup_key ?? null,
				product: productId,
				recurring: {
					interval: entry.interval ?? 'month',
					interval_count: 1,
					usage_type: 'licensed'
				},
				type: 'recurring',
				metadata: { ...entry.metadata },
				livemode: false
			});
		}
	}
}

/** Adds `count` billing intervals to a Unix time, calendar-aware for months and years. */
export function addInterval(at: number, interval: Interval, count = 1): number {
	const date = new Date(at * 1000);
	if (interval === 'day') date.setUTCDate(date.getUTCDate() + count);
	else if (interval === 'week') date.setUTCDate(date.getUTCDate() + 7 * count);
	else if (interval === 'month') date.setUTCMonth(date.getUTCMonth() + count);
	else date.setUTCFullYear(date.getUTCFullYear() + count);
	return Math.floor(date.getTime() / 1000);
}

/**
 * Stripe's list pagination over items given newest first: `limit` (1–100, default 10),
 * `starting_after` and `ending_before`.
 */
export function paginate<T extends { id: string }>(
	newestFirst: T[],
	query: { limit?: string; starting_after?: string; ending_before?: string },
	url: string
): List<T> {
	const limit = Math.min(100, Math.max(1, Number(query.limit ?? 10) || 10));
	let items = newestFirst;
	if (query.starting_after) {
		const index = items.findIndex((item) => item.id === query.starting_after);
		items = index === -1 ? [] : items.slice(index + 1);
	} else if (query.ending_before) {
		const index = items.findIndex((item) => item.id === query.ending_before);
		items = index === -1 ? [] : items.slice(Math.max(0, index - limit), index);
		return { object: 'list', data: items, has_more: index - limit > 0, url };
	}
	return { object: 'list', data: items.slice(0, limit), has_more: items.length > limit, url };
}

/**
 * Applies Stripe's `expand` paths (`customer`, `latest_invoice`, `data.product`,
 * `items.data.price.product`, …) to a deep copy: each id string found at a path is replaced by the
 * stored object. Unknown paths are left alone rather than refused; a fake need not be stricter.
 */
export function expand<T>(value: T, paths: string[], state: StripeState): T {
	const copy = structuredClone(value);
	for (const path of paths) expandPath(copy, path.split('.'), state);
	return copy;
}

function expandPath(node: unknown, path: string[], state: StripeState): void {
	if (node === null || typeof node !== 'object' || path.length === 0) return;
	if (Array.isArray(node)) {
		for (const item of node) expandPath(item, path, state);
		return;
	}
	const record = node as Record<string, unknown>;
	const [head, ...rest] = path;
	const current = record[head];
	if (typeof current === 'string') {
		const found = state.lookup(current);
		if (found) record[head] = structuredClone(found);
	}
	expandPath(record[head], rest, state);
}
