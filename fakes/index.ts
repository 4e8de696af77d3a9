/**
 * Starts the fake SES and the fake Stripe together for development and tests:
 * `npx tsx fakes/index.ts` (or `npm run fakes`). One line per server on start; SIGINT or
 * SIGTERM closes both. Configuration comes from the environment:
 *
 * - `FAKE_SES_PORT` (4579), `FAKE_SES_STORE` (JSON-lines file for the dev mailbox, optional)
 * - `FAKE_STRIPE_PORT` (12111), `FAKE_STRIPE_PUBLIC_URL` (optional)
 * - `STRIPE_WEBHOOK_URL` (`http://127.0.0.1:${PORT||5173}/api/v1/stripe/webhook`)
 * - `STRIPE_WEBHOOK_SECRET` (a fixed local value when unset; the app must use the same)
 * - `FAKE_STRIPE_PRICES` (optional: a JSON array of prices, or the path of a JSON file with one)
 * - `FAKES_HOST` (127.0.0.1)
 */
import { existsSync, readFileSync } from 'node:fs';
import { ListenError } from './lib/http';
import { startFakeSes, type FakeSes } from './ses';
import { startFakeStripe, type CataloguePrice, type FakeStripe } from './stripe';

/** Used when STRIPE_WEBHOOK_SECRET is unset; the same value as .env.example, so the two agree. Not a secret. */
const LOCAL_WEBHOOK_SECRET = 'whsec_local_fake';

function port(name: string, fallback: number): number {
	const raw = process.env[name];
	if (raw === undefined || raw === '') return fallback;
	const value = Number(raw);
	if (!Number.isInteger(value) || value < 0 || value > 65535) {
		fail(`${name} must be a port number from 0 to 65535; got '${raw}'.`);
	}
	return value;
}

function prices(): CataloguePrice[] | undefined {
	const raw = process.env.FAKE_STRIPE_PRICES;
	if (!raw) return undefined;
	const text = raw.trim().startsWith('[')
		? raw
		: existsSync(raw)
			? readFileSync(raw, 'utf8')
			: null;
	if (text === null)
		fail(`FAKE_STRIPE_PRICES is neither a JSON array nor an existing file: '${raw}'.`);
	try {
		const parsed: unknown = JSON.parse(text);
		if (!Array.isArray(parsed)) throw new Error('not an array');
		return parsed as CataloguePrice[];
	} catch (err) {
		fail(`FAKE_STRIPE_PRICES must hold a JSON array of prices: ${(err as Error).message}.`);
	}
}

function fail(message: string): never {
	console.error(message);
	process.exit(1);
}

async function main(): Promise<void> {
	const host = process.env.FAKES_HOST || '127.0.0.1';
	const secret = process.env.STRIPE_WEBHOOK_SECRET || LOCAL_WEBHOOK_SECRET;
	const webhookUrl =
		process.env.STRIPE_WEBHOOK_URL ||
		`http://127.0.0.1:${process.env.PORT || 5173}/api/v1/stripe/webhook`;
	const running: Array<FakeSes | FakeStripe> = [];
	try {
		const ses = await startFakeSes({
			port: port('FAKE_SES_PORT', 4579),
			host,
			storeFile: process.env.FAKE_SES_STORE || undefined
		});
		running.push(ses);
		const store = process.env.FAKE_SES_STORE ? `, store ${process.env.FAKE_SES_STORE}` : '';
		console.log(`fake SES     ${ses.url}  (messages: ${ses.url}/_fake/messages${store})`);

		const stripe = await startFakeStripe({
			port: port('FAKE_STRIPE_PORT', 12111),
			host,
			webhookUrl,
			webhookSecret: secret,
			publicUrl: process.env.FAKE_STRIPE_PUBLIC_URL || undefined,
			prices: prices()
		});
		running.push(stripe);
		const secretNote = process.env.STRIPE_WEBHOOK_SECRET
			? ''
			: ` with the default secret ${LOCAL_WEBHOOK_SECRET}`;
		console.log(`fake Stripe  ${stripe.url}  (webhooks to ${webhookUrl}${secretNote})`);
	} catch (err) {
		await Promise.allSettled(running.map((server) => server.close()));
		if (err instanceof ListenError) fail(err.message);
		fail(`fakes: could not start: ${err instanceof Error ? err.message : String(err)}`);
	}

	let stopping = false;
	const stop = (signal: string) => {
		// A second signal means "now": do not wait for connections to drain.
		if (stopping) process.exit(0);
		stopping = true;
		console.log(`fakes: ${signal}, closing`);
		Promise.allSettled(running.map((server) => server.close())).then(() => process.exit(0));
		// Should a close hang, do not keep a test runner waiting for ever.
		setTimeout(() => process.exit(0), 3000).unref();
	};
	process.on('SIGINT', () => stop('SIGINT'));
	process.on('SIGTERM', () => stop('SIGTERM'));
}

void main();
