/**
 * Local fake of the Stripe API, for development and tests. It serves what Datumkeep calls through
 * the official SDK (customers, catalogue, checkout and billing-portal sessions, subscriptions,
 * invoices), stand-in hosted pages for checkout and the portal, and signed webhooks with retries
 * and, on request, duplicate or out-of-order delivery.
 *
 * Point the SDK at it with
 * `new Stripe('sk_test_…', { host: '127.0.0.1', port, protocol: 'http', maxNetworkRetries: 0 })`.
 */
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import { closeServer, listen, readBody, redirect, sendHtml, sendJson } from './lib/http';
import { handleApi } from './stripe/api';
import { DEFAULT_PRICES } from './stripe/catalogue';
import { handleControl } from './stripe/control';
import { StripeApiError } from './stripe/errors';
import { parseForm } from './stripe/form';
import { handlePage } from './stripe/pages';
import { newId, StripeState } from './stripe/state';
import type { CataloguePrice } from './stripe/types';
import { WebhookSender, type EventRecord } from './stripe/webhooks';

export type { CataloguePrice } from './stripe/types';
export { DEFAULT_PRICES } from './stripe/catalogue';
export { CARD_DECLINED, CARD_OK } from './stripe/billing';

/** Options for {@link startFakeStripe}. */
export interface FakeStripeOptions {
	/** Port to listen on; 0 picks a free one (see `url`). */
	port: number;
	/** Address to bind; loopback unless told otherwise. */
	host?: string;
	/** Where events are POSTed (the app's webhook route). Without it events are only logged. */
	webhookUrl?: string;
	/** The `whsec_…` secret the app verifies signatures with; required with `webhookUrl`. */
	webhookSecret?: string;
	/**
	 * Base URL the browser uses for the stand-in pages (checkout and portal links point here);
	 * defaults to `url`. Set it when the browser reaches the fake through another address.
	 */
	publicUrl?: string;
	/** The fixed catalogue; {@link DEFAULT_PRICES} when omitted. */
	prices?: CataloguePrice[];
	/** Tries per webhook delivery, the first included (default 3). */
	webhookMaxAttempts?: number;
	/** Wait before the first retry in ms, doubled each time (default 1000). */
	webhookRetryBaseMs?: number;
	/** How long one delivery waits for the app to answer, in ms (default 10000). */
	webhookTimeoutMs?: number;
}

/** A running fake Stripe. */
export interface FakeStripe {
	/** Base URL of the server, e.g. `http://127.0.0.1:12111`. */
	url: string;
	/** Host and port to give the SDK. */
	host: string;
	port: number;
	/** Base URL of the stand-in pages (equals `url` unless `publicUrl` was given). */
	publicUrl: string;
	/** Stops retries, stops listening, drops open connections. */
	close(): Promise<void>;
	/** Every event sent so far with its delivery attempts, oldest first. */
	events(): EventRecord[];
	/** Resolves once no webhook delivery is in flight or waiting for a retry. */
	idle(): Promise<void>;
	/** Forgets customers, sessions, subscriptions, invoices and the event log (keeps the catalogue). */
	reset(): void;
	/** The in-memory state, for tests that need to look behind the API. */
	state: StripeState;
}

/** Stripe's API keys for test mode start like this; the fake refuses anything else. */
const TEST_KEY = /^sk_test_[A-Za-z0-9_]+$/;
/** Remembered idempotent answers; the SDK sends a fresh key with every POST, so keep this bounded. */
const MAX_IDEMPOTENT = 2000;

/** Starts the fake Stripe server. Resolves once it is listening. */
export async function startFakeStripe(options: FakeStripeOptions): Promise<FakeStripe> {
	if (options.webhookUrl && !options.webhookSecret) {
		throw new Error(
			'fake Stripe: webhookUrl needs webhookSecret (the whsec_… value the app verifies with).'
		);
	}
	const host = options.host ?? '127.0.0.1';
	const webhooks = new WebhookSender({
		url: options.webhookUrl,
		secret: options.webhookSecret,
		maxAttempts: options.webhookMaxAttempts ?? 3,
		retryBaseMs: options.webhookRetryBaseMs ?? 1000,
		timeoutMs: options.webhookTimeoutMs ?? 10_000
	});
	// The public URL is only known once listening (port 0); the state reads it lazily through this box.
	const box: { state?: StripeState } = {};

	const server = createServer((req, res) => {
		handle(req, res).catch((err: unknown) => {
			if (res.headersSent) {
				res.destroy();
				return;
			}
			sendJson(res, 500, {
				error: { type: 'api_error', message: `The local fake Stripe failed: ${String(err)}` }
			});
		});
	});

	async function handle(req: IncomingMessage, res: ServerResponse): Promise<void> {
		const state = box.state!;
		const method = req.method ?? 'GET';
		const url = new URL(req.url ?? '/', 'http://fake.local');
		const path = url.pathname;
		const body = await readBody(req);

		if (path.startsWith('/v1/')) {
			res.setHeader('request-id', newId('req', 14));
			try {
				checkKey(req.headers.authorization);
				const params = parseForm(
					method === 'POST' ? new URLSearchParams(`${url.searchParams}&${body}`) : url.searchParams
				);
				const key = req.headers['idempotency-key'];
				const memo = typeof key === 'string' && method === 'POST' ? `${path} ${key}` : null;
				const previous = memo ? state.idempotent.get(memo) : undefined;
				if (previous) {
					res.setHeader('idempotent-replayed', 'true');
					sendJson(res, previous.status, previous.body);
					return;
				}
				const result = handleApi(
					{ state, emit: (events) => void webhooks.send(events) },
					method,
					path,
					params
				);
				if (memo) remember(state, memo, { status: 200, body: result });
				sendJson(res, 200, result);
			} catch (err) {
				if (!(err instanceof StripeApiError)) throw err;
				sendJson(res, err.status, err.toJSON());
			}
			return;
		}

		if (path.startsWith('/_fake/')) {
			const result = await handleControl(state, webhooks, method, path, body);
			if (result) {
				if (result.status === 204) res.writeHead(204).end();
				else sendJson(res, result.status, result.body);
				return;
			}
		}

		const page = await handlePage(
			{ state, deliver: async (events) => void (await webhooks.send(events)) },
			method,
			path,
			method === 'POST' ? parseForm(body) : {},
			url.searchParams
		);
		if (page && 'redirect' in page) {
			redirect(res, page.redirect);
			return;
		}
		if (page) {
			sendHtml(res, page.status, page.html);
			return;
		}
		if (path === '/' && method === 'GET') {
			sendJson(res, 200, {
				name: 'Datumkeep local fake Stripe',
				api: '/v1/…',
				control: [
					'GET /_fake/events',
					'POST /_fake/events',
					'POST /_fake/clock/advance',
					'GET /_fake/state',
					'POST /_fake/reset'
				],
				prices: [...state.prices.keys()]
			});
			return;
		}
		sendJson(res, 404, {
			error: {
				type: 'invalid_request_error',
				message: `Unrecognized request URL (${method}: ${path}). API calls start with /v1/, test controls with /_fake/.`
			}
		});
	}

	const url = await listen(server, options.port, host, 'fake Stripe', 'FAKE_STRIPE_PORT');
	const publicUrl = (options.publicUrl ?? url).replace(/\/+$/, '');
	const state = new StripeState(options.prices ?? DEFAULT_PRICES, publicUrl);
	box.state = state;
	const port = Number(new URL(url).port);

	return {
		url,
		host,
		port,
		publicUrl,
		state,
		close: async () => {
			webhooks.close();
			await closeServer(server);
		},
		events: () => webhooks.records.slice(),
		idle: () => webhooks.idle(),
		reset: () => {
			state.reset();
			webhooks.clear();
		}
	};
}

/** Accepts `Bearer sk_test_…` (what the SDK sends) and Basic with the key as user (what curl -u sends). */
function checkKey(header: string | undefined): void {
	let key = '';
	if (header?.startsWith('Bearer ')) key = header.slice(7).trim();
	else if (header?.startsWith('Basic '))
		key = Buffer.from(header.slice(6), 'base64').toString('utf8').split(':')[0];
	if (!key) {
		throw new StripeApiError(
			401,
			'invalid_request_error',
			'You did not provide an API key. Send it as a Bearer token (the SDK does this when given a key).'
		);
	}
	if (!TEST_KEY.test(key)) {
		throw new StripeApiError(
			401,
			'invalid_request_error',
			`Invalid API key provided: ${key.slice(0, 8)}…. The local fake Stripe accepts test secret keys (sk_test_…) only.`
		);
	}
}

function remember(
	state: StripeState,
	memo: string,
	answer: { status: number; body: unknown }
): void {
	if (state.idempotent.size >= MAX_IDEMPOTENT) {
		const oldest = state.idempotent.keys().next().value;
		if (oldest !== undefined) state.idempotent.delete(oldest);
	}
	// Stored as JSON so that later changes to the live object do not alter the replayed answer.
	state.idempotent.set(memo, {
		status: answer.status,
		body: JSON.parse(JSON.stringify(answer.body))
	});
}
