import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { expect, request, test } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL } from './helpers';

/**
 * `npm start` itself (scripts/start.sh), as a newcomer runs it: on its own ports, its own
 * database (`…_start_test`, fresh: the demo seed is loaded by start.sh), its own Redis database,
 * queue prefix and fake SES store, so it never meets the other specs' server. It must serve the
 * production build (not vite), with the demo signed in, SvelteKit's CSRF check on and the dev
 * mailbox behind sign-in; and Ctrl-C or SIGTERM must stop everything it started.
 * START_BUILD=never: npm test has just built, and this spec must not rebuild the folder the
 * other specs' server is running from (the build rule itself: scripts/start.sh).
 */
const base = Number(process.env.TEST_CLUSTER_PORT_BASE ?? 4660) + 50;
const ports = { app: base, ses: base + 1, stripe: base + 2 };
const url = `http://127.0.0.1:${ports.app}`;
const testDb = new URL(
	process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/datumkeep_test'
);
const db = new URL(testDb);
db.pathname = `/${testDb.pathname.slice(1).replace(/_test$/, '')}_start_test`;
const appDb = new URL(db);
appDb.username = 'datumkeep_app';
const redisUrl = new URL(process.env.REDIS_URL ?? 'redis://127.0.0.1:63799/1');
redisUrl.pathname = `/${(Number(redisUrl.pathname.slice(1) || 0) + 3) % 16}`;

let scratch: string;

test.describe.configure({ mode: 'serial' });

test.beforeAll(() => {
	scratch = mkdtempSync(join(tmpdir(), 'datumkeep-start-'));
	execFileSync('npx', ['tsx', 'scripts/create-db.ts', '--fresh'], {
		env: { ...process.env, DATABASE_URL: db.href },
		stdio: 'pipe'
	});
	execFileSync('redis-cli', ['-u', redisUrl.href, 'flushdb'], { stdio: 'pipe' });
});

test.afterAll(() => {
	rmSync(scratch, { recursive: true, force: true });
});

interface Started {
	child: ChildProcess;
	output: () => string;
}

/** `npm start` in its own process group (as a terminal runs it), until /healthz answers. */
async function npmStart(): Promise<Started> {
	const env: Record<string, string> = { ...(process.env as Record<string, string>) };
	for (const k of ['SES_ENDPOINT', 'DATABASE_DIRECT_URL', 'npm_lifecycle_event']) delete env[k];
	Object.assign(env, {
		PORT: String(ports.app),
		ORIGIN: url,
		DATABASE_URL: db.href,
		DATABASE_APP_URL: appDb.href,
		REDIS_URL: redisUrl.href,
		QUEUE_PREFIX: `${process.env.QUEUE_PREFIX ?? 'datumkeep'}-start`,
		FAKE_SES_PORT: String(ports.ses),
		FAKE_STRIPE_PORT: String(ports.stripe),
		FAKE_SES_STORE: join(scratch, 'fake-ses.jsonl'),
		STRIPE_WEBHOOK_URL: `${url}/api/v1/stripe/webhook`,
		UPLOADS_DIR: join(scratch, 'uploads'),
		START_BUILD: 'never'
	});
	const child = spawn('npm', ['start'], { env, stdio: ['ignore', 'pipe', 'pipe'], detached: true });
	let out = '';
	child.stdout!.on('data', (b: Buffer) => (out += b.toString()));
	child.stderr!.on('data', (b: Buffer) => (out += b.toString()));
	const deadline = Date.now() + 120_000;
	for (;;) {
		if (child.exitCode !== null) throw new Error(`npm start stopped (${child.exitCode}):\n${out}`);
		if (Date.now() > deadline) throw new Error(`npm start did not answer in time:\n${out}`);
		const ok = await fetch(`${url}/healthz`)
			.then((r) => r.ok)
			.catch(() => false);
		if (ok) return { child, output: () => out };
		await new Promise((r) => setTimeout(r, 500));
	}
}

async function portFree(port: number): Promise<boolean> {
	return fetch(`http://127.0.0.1:${port}/`).then(
		() => false,
		() => true
	);
}

/** Process ids still in the group npm start led (none once it has stopped). */
function groupMembers(pgid: number): number[] {
	return execFileSync('ps', ['-e', '-o', 'pid=,pgid='], { encoding: 'utf8' })
		.split('\n')
		.map((l) => l.trim().split(/\s+/).map(Number))
		.filter(([pid, group]) => pid > 0 && group === pgid)
		.map(([pid]) => pid);
}

/** Sends the signal, then waits until the group is empty and every port it used is free. */
async function stopAndCheck(s: Started, signal: NodeJS.Signals, toGroup: boolean) {
	const pgid = s.child.pid!;
	const exited = new Promise((r) => s.child.once('exit', r));
	if (toGroup)
		process.kill(-pgid, signal); // Ctrl-C in a terminal signals the whole group
	else s.child.kill(signal); // a supervisor signals the command it started
	await Promise.race([exited, new Promise((r) => setTimeout(r, 30_000))]);
	await expect.poll(() => groupMembers(pgid), { timeout: 20_000 }).toEqual([]);
	for (const port of Object.values(ports)) expect(await portFree(port), `port ${port}`).toBe(true);
}

test('npm start serves the production build with the demo, CSRF on and the mailbox signed in; SIGTERM stops it all', async () => {
	test.setTimeout(180_000);
	const started = await npmStart();
	try {
		expect(started.output()).toContain('serving the existing build');
		expect(started.output()).toContain(`Datumkeep is starting at ${url}`);

		// The production server (adapter-node), not vite's dev server.
		expect((await fetch(`${url}/@vite/client`)).status).toBe(404);
		const home = await (await fetch(`${url}/signin`)).text();
		expect(home).toContain('/_app/immutable/');
		expect(home).not.toContain('/@vite/client');

		// The demo shop is there and a demo person signs in.
		const ada = await request.newContext({ baseURL: url, extraHTTPHeaders: { Origin: url } });
		const signIn = await ada.post('/signin', {
			form: { email: FERNHILL.owner, password: DEMO_PASSWORD, next: '/shops' },
			headers: { accept: 'text/html' },
			maxRedirects: 0
		});
		expect([302, 303]).toContain(signIn.status());
		const shop = await ada.get(`/shops/${FERNHILL.slug}`);
		expect(shop.status()).toBe(200);
		expect(await shop.text()).toContain('Fernhill Precision');

		// SvelteKit's CSRF check: a form posted from another site is refused, and changes nothing.
		const invite = await ada.post(`/shops/${FERNHILL.slug}/members?/invite`, {
			form: { email: 'csrf-victim@example.test', role: 'admin' },
			headers: { Origin: 'http://evil.example', accept: 'text/html' },
			maxRedirects: 0
		});
		expect(invite.status()).toBe(403);
		expect(await invite.text()).toContain('Cross-site');

		// The development mailbox: only signed in, and only one's own mail.
		const anon = await request.newContext({ baseURL: url });
		const mailbox = await anon.get('/dev/mailbox', { maxRedirects: 0 });
		expect(mailbox.status()).toBe(303);
		expect(mailbox.headers()['location']).toContain('/signin');
		const own = await ada.get('/dev/mailbox');
		expect(own.status()).toBe(200);
		expect(await own.text()).not.toContain('csrf-victim@example.test');
		await ada.dispose();
		await anon.dispose();
	} finally {
		await stopAndCheck(started, 'SIGTERM', false);
	}
});

test('Ctrl-C (SIGINT to the process group) stops everything npm start started', async () => {
	test.setTimeout(180_000);
	const started = await npmStart();
	await stopAndCheck(started, 'SIGINT', true);
	expect(started.output()).not.toMatch(/building the app/);
});
