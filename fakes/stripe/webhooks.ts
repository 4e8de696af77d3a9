/**
 * Webhook delivery: signs each event with the SDK's own test-header helper (so the app's
 * `constructEvent` verifies it exactly as in production), posts it, and retries with backoff
 * when the app answers anything but 2xx. Every attempt is logged for `GET /_fake/events`.
 */
import Stripe from 'stripe';
import type { StripeEvent } from './types';

/** How a batch of events is delivered: as is, each one twice (same id), or newest first. */
export type DeliveryMode = 'normal' | 'twice' | 'reversed';

/** One POST of one event to the app. */
export interface DeliveryAttempt {
	/** 1, or 2 for the repeat of a 'twice' delivery. */
	copy: number;
	/** 1 for the first try, then 2, 3 … for retries. */
	attempt: number;
	at: string;
	/** HTTP status the app answered, or null when it could not be reached. */
	status: number | null;
	error?: string;
}

/** An event and what became of it. */
export interface EventRecord {
	event: StripeEvent;
	mode: DeliveryMode;
	attempts: DeliveryAttempt[];
	/** Delivery chains still waiting for a retry. */
	pending: number;
}

/** Summary of a record, as `GET /_fake/events` shows it. */
export function outcome(record: EventRecord, hasEndpoint: boolean): string {
	if (record.attempts.some((a) => a.status !== null && a.status >= 200 && a.status < 300))
		return 'delivered';
	if (record.pending > 0) return 'retrying';
	return hasEndpoint ? 'failed' : 'no-endpoint';
}

/** Settings for {@link WebhookSender}. */
export interface WebhookSettings {
	url?: string;
	secret?: string;
	/** Tries per event, the first included. */
	maxAttempts: number;
	/** Wait before the first retry; doubled for each further one. */
	retryBaseMs: number;
	/** How long to wait for the app to answer one POST. */
	timeoutMs: number;
}

/** Delivers events and keeps the log. */
export class WebhookSender {
	/** Every event handed to {@link send}, in the order it was first sent. */
	readonly records: EventRecord[] = [];
	private readonly timers = new Set<NodeJS.Timeout>();
	private readonly inFlight = new Set<AbortController>();
	private idleWaiters: Array<() => void> = [];
	private closed = false;

	constructor(readonly settings: WebhookSettings) {}

	/**
	 * Sends a batch one event after another and resolves when each first attempt has an answer,
	 * so the caller (checkout page, control API) knows the app has seen the events before it goes
	 * on. Retries continue in the background.
	 */
	async send(events: StripeEvent[], mode: DeliveryMode = 'normal'): Promise<EventRecord[]> {
		const ordered =
			mode === 'reversed' ? [...events].sort((a, b) => b.created - a.created) : events;
		const sent: EventRecord[] = [];
		for (const event of ordered) {
			const record: EventRecord = { event, mode, attempts: [], pending: 0 };
			this.records.push(record);
			sent.push(record);
			for (let copy = 1; copy <= (mode === 'twice' ? 2 : 1); copy++) {
				await this.attempt(record, copy, 1);
			}
		}
		return sent;
	}

	/** Resolves when no delivery is in flight or waiting for a retry. */
	idle(): Promise<void> {
		if (this.timers.size === 0 && this.inFlight.size === 0) return Promise.resolve();
		return new Promise((resolve) => this.idleWaiters.push(resolve));
	}

	/** Stops retries and aborts open requests; used when the fake shuts down. */
	close(): void {
		this.closed = true;
		for (const timer of this.timers) clearTimeout(timer);
		this.timers.clear();
		for (const controller of this.inFlight) controller.abort();
		this.notifyIdle();
	}

	/** Forgets the log (retries already scheduled still run). */
	clear(): void {
		this.records.length = 0;
	}

	private async attempt(record: EventRecord, copy: number, attempt: number): Promise<void> {
		const { url, secret } = this.settings;
		if (!url || !secret || this.closed) return;
		// Stripe sends pretty-printed JSON; the signature covers these exact bytes.
		const payload = JSON.stringify(record.event, null, 2);
		// Signed with the real clock, not the fake one: the app checks the timestamp against its own.
		const signature = Stripe.webhooks.generateTestHeaderString({ payload, secret });
		const controller = new AbortController();
		const timeout = setTimeout(() => controller.abort(), this.settings.timeoutMs);
		this.inFlight.add(controller);
		const entry: DeliveryAttempt = { copy, attempt, at: new Date().toISOString(), status: null };
		try {
			const response = await fetch(url, {
				method: 'POST',
				headers: {
					'content-type': 'application/json; charset=utf-8',
					'stripe-signature': signature,
					'user-agent': 'Datumkeep-fake-stripe/1 (local test stand-in)'
				},
				body: payload,
				// A redirect is a failed delivery for Stripe too: the endpoint URL is wrong.
				redirect: 'manual',
				signal: controller.signal
			});
			entry.status = response.status;
			await response.arrayBuffer();
		} catch (err) {
			entry.error = describe(err);
		} finally {
			clearTimeout(timeout);
			this.inFlight.delete(controller);
		}
		record.attempts.push(entry);
		const ok = entry.status !== null && entry.status >= 200 && entry.status < 300;
		if (!ok && attempt < this.settings.maxAttempts && !this.closed) {
			record.pending += 1;
			const delay = this.settings.retryBaseMs * 2 ** (attempt - 1);
			const timer = setTimeout(() => {
				this.timers.delete(timer);
				record.pending -= 1;
				void this.attempt(record, copy, attempt + 1).finally(() => this.notifyIdle());
			}, delay);
			// Pending retries must not keep a test process or a stopping server alive.
			timer.unref();
			this.timers.add(timer);
		}
		this.notifyIdle();
	}

	private notifyIdle(): void {
		if (this.timers.size > 0 || this.inFlight.size > 0) return;
		const waiters = this.idleWaiters;
		this.idleWaiters = [];
		for (const resolve of waiters) resolve();
	}
}

function describe(err: unknown): string {
	if (err instanceof Error) {
		const cause = (err as Error & { cause?: { code?: string; message?: string } }).cause;
		if (err.name === 'AbortError') return 'no answer in time (or the fake is shutting down)';
		return cause?.code ?? cause?.message ?? err.message;
	}
	return String(err);
}
