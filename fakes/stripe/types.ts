/**
 * The object shapes the fake Stripe returns. They follow the API version pinned by the installed
 * SDK (`Stripe.API_VERSION`), but only the fields Datumkeep reads or could reasonably read; the
 * SDK's own types are far larger. Note that in this API version the billing period lives on the
 * subscription *items* (`items.data[0].current_period_end`) and an invoice names its subscription
 * under `parent.subscription_details.subscription`.
 */

/** String-to-string metadata, as Stripe stores it. */
export type Metadata = Record<string, string>;

/** A Stripe list envelope. */
export interface List<T> {
	object: 'list';
	data: T[];
	has_more: boolean;
	url: string;
}

export interface Customer {
	id: string;
	object: 'customer';
	created: number;
	email: string | null;
	name: string | null;
	description: string | null;
	phone: string | null;
	metadata: Metadata;
	livemode: false;
}

export interface Product {
	id: string;
	object: 'product';
	created: number;
	name: string;
	active: boolean;
	description: string | null;
	metadata: Metadata;
	livemode: false;
}

/** Billing interval of a recurring price. */
export type Interval = 'day' | 'week' | 'month' | 'year';

export interface Price {
	id: string;
	object: 'price';
	created: number;
	active: boolean;
	currency: string;
	unit_amount: number;
	nickname: string | null;
	lookup_key: string | null;
	product: string | Product;
	recurring: { interval: Interval; interval_count: number; usage_type: 'licensed' };
	type: 'recurring';
	metadata: Metadata;
	livemode: false;
}

export interface SubscriptionItem {
	id: string;
	object: 'subscription_item';
	created: number;
	subscription: string;
	price: Price;
	quantity: number;
	current_period_start: number;
	current_period_end: number;
	metadata: Metadata;
}

/** Subscription statuses the fake produces. */
export type SubscriptionStatus =
	| 'trialing'
	| 'active'
	| 'past_due'
	| 'unpaid'
	| 'canceled'
	| 'incomplete'
	| 'incomplete_expired'
	| 'paused';

export interface Subscription {
	id: string;
	object: 'subscription';
	created: number;
	customer: string | Customer;
	status: SubscriptionStatus;
	items: List<SubscriptionItem>;
	currency: string;
	start_date: number;
	billing_cycle_anchor: number;
	cancel_at_period_end: boolean;
	cancel_at: number | null;
	canceled_at: number | null;
	ended_at: number | null;
	trial_start: number | null;
	trial_end: number | null;
	latest_invoice: string | Invoice | null;
	collection_method: 'charge_automatically';
	metadata: Metadata;
	livemode: false;
}

export interface InvoiceLine {
	id: string;
	object: 'line_item';
	amount: number;
	currency: string;
	description: string;
	quantity: number;
	period: { start: number; end: number };
	pricing: { type: 'price_details'; price_details: { price: string; product: string } };
}

export interface Invoice {
	id: string;
	object: 'invoice';
	created: number;
	customer: string | Customer;
	status: 'draft' | 'open' | 'paid' | 'uncollectible' | 'void';
	number: string;
	currency: string;
	amount_due: number;
	amount_paid: number;
	amount_remaining: number;
	subtotal: number;
	total: number;
	attempt_count: number;
	attempted: boolean;
	billing_reason: 'subscription_create' | 'subscription_cycle' | 'subscription_update' | 'manual';
	period_start: number;
	period_end: number;
	next_payment_attempt: number | null;
	hosted_invoice_url: string;
	invoice_pdf: null;
	lines: List<InvoiceLine>;
	parent: {
		type: 'subscription_details';
		quote_details: null;
		subscription_details: { subscription: string | Subscription; metadata: Metadata };
	};
	status_transitions: { finalized_at: number | null; paid_at: number | null };
	metadata: Metadata;
	livemode: false;
}

export interface CheckoutSession {
	id: string;
	object: 'checkout.session';
	created: number;
	expires_at: number;
	mode: 'subscription';
	status: 'open' | 'complete' | 'expired';
	payment_status: 'unpaid' | 'paid' | 'no_payment_required';
	url: string | null;
	success_url: string;
	cancel_url: string | null;
	customer: string | Customer | null;
	customer_email: string | null;
	client_reference_id: string | null;
	subscription: string | Subscription | null;
	invoice: string | Invoice | null;
	currency: string;
	amount_subtotal: number;
	amount_total: number;
	metadata: Metadata;
	livemode: false;
}

export interface PortalSession {
	id: string;
	object: 'billing_portal.session';
	created: number;
	customer: string;
	return_url: string | null;
	url: string;
	livemode: false;
}

/** Event types the fake sends. */
export type EventType =
	| 'checkout.session.completed'
	| 'customer.subscription.created'
	| 'customer.subscription.updated'
	| 'customer.subscription.deleted'
	| 'invoice.paid'
	| 'invoice.payment_failed';

/** Any top-level object an event can carry. */
export type EventObject = CheckoutSession | Subscription | Invoice;

export interface StripeEvent {
	id: string;
	object: 'event';
	type: EventType;
	created: number;
	api_version: string;
	livemode: false;
	pending_webhooks: number;
	request: { id: string | null; idempotency_key: string | null };
	data: { object: EventObject; previous_attributes?: Record<string, unknown> };
}

/** A catalogue entry given to `startFakeStripe({ prices })`. */
export interface CataloguePrice {
	/** Price id the app uses, e.g. `price_shop_monthly`. */
	id: string;
	/** Display name of the product the price belongs to, e.g. `Shop`. */
	productName: string;
	/** Amount in the currency's smallest unit (cents). */
	unit_amount: number;
	/** Lower-case ISO currency; `usd` when omitted. */
	currency?: string;
	/** Billing interval; `month` when omitted. */
	interval?: Interval;
	/** Copied onto both the price and its product (e.g. `{ machine_limit: '10' }`). */
	metadata?: Metadata;
	/** Optional lookup key, so the app may find prices by key instead of id. */
	lookup_key?: string;
	/** Product id; derived from the price id when omitted. */
	productId?: string;
}
