/**
 * The fleet board API under load (issue 7): `npm run bench` runs it after the program check,
 * `npm run bench -- fleet` runs it alone. docs/PERFORMANCE.md explains the figures.
 *
 * 1. A fresh database of its own (`datumkeep_bench`, from DATABASE_URL's server; the name must
 *    end in `_bench` and the server must be on loopback), migrated, with one shop of 200
 *    machines, 4,000 tools and 50,000 readings (tests/fixtures/fleet-data.ts, the scale test's data) and
 *    a lead to sign in as.
 * 2. The production build (`vite build`, unless BENCH_SKIP_BUILD=1) served by `node build` on a
 *    free loopback port, exactly as in production: hooks, Auth.js session, guard, board cache,
 *    Knex pool, logged in as the least-privilege app role (BENCH_SHOP_RLS=off drops the shop's
 *    row-level security, to compare). A second server from the same build with FLEET_BOARD_CACHE=off shows what a
 *    board costs when it is built for every request (after every change, in effect).
 * 3. A sign-in through the real form action (POST /signin with an Origin header); its session
 *    cookie is sent with every request to GET /api/v1/shops/<shop>/fleet, with the
 *    `Accept-Encoding` a browser sends (the board is then served gzipped, ~7 kB, as to the
 *    board page).
 * 4. The bare endpoints, each answering a constant JSON: the app's own `/livez` (same server,
 *    same hooks, no session, no database) — the one the goal compares with — and, for scale, a
 *    plain node:http server in a process of its own.
 * 5. autocannon, 50 connections (BENCH_CONNECTIONS), 10 s each (BENCH_SECONDS) after a 2 s
 *    warm-up, one target after another (the board also for a client that does not take gzip,
 *    and from the server with the cache off). Latency percentiles are computed from every
 *    response's own time (autocannon's summary has no p95 and rounds to whole ms).
 * Figures go to the console and bench/out/fleet.json. The bench database is dropped at the end
 * unless BENCH_KEEP_DB=1.
 */
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdirSync, writeFileSync } from 'node:fs';
import { createServer, type AddressInfo } from 'node:net';
import { cpus, loadavg } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import autocannon from 'autocannon';
import { hashPassword } from '$lib/server/auth/password';
import { config, reloadConfig } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { assertLoopbackDatabase } from '$lib/server/db/loopback';
import { migrateAll } from '$lib/server/db/migrate';
import { APP_ROLE, OWNER_ROLE } from '$lib/server/db/roles';
import { provisionShop } from '$lib/server/shops/provision';
import { SCALE, seedScaleShop } from '../tests/fixtures/fleet-data';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..');
const outDir = join(here, 'out');
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 50);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 10);
const WARMUP_SECONDS = 2;
const DB_NAME = process.env.BENCH_DATABASE_NAME ?? 'datumkeep_bench';
/** The benchmark's AUTH_SECRET, in this process too: shops provisioned here are keyed with it
 * (db/shop-token.ts), and the servers it starts must open them. */
const BENCH_SECRET = (process.env.AUTH_SECRET ||= randomBytes(32).toString('hex'));
reloadConfig();
const SHOP_SLUG = 'bench-machining';
const LEAD = { email: 'lead@bench.example', password: 'bench-password-not-secret' };

const children: ChildProcess[] = [];
/**
 * Stops the servers this bench started. SIGKILL after a grace period: adapter-node stops
 * listening on SIGTERM but its open Redis and PostgreSQL connections keep the process alive.
 */
async function stopChildren(): Promise<void> {
	await Promise.all(
		children
			.filter((c) => c.exitCode === null && c.signalCode === null)
			.map(
				(c) =>
					new Promise<void>((resolve) => {
						const timer = setTimeout(() => c.kill('SIGKILL'), 3000);
						c.once('exit', () => {
							clearTimeout(timer);
							resolve();
						});
						c.kill('SIGTERM');
					})
			)
	);
}
process.on('exit', () => {
	for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
});

function benchDatabaseUrl(): string {
	if (!/^[a-z_][a-z0-9_]*_bench$/.test(DB_NAME))
		throw new Error(`the bench database name must end in _bench; got "${DB_NAME}"`);
	const url = new URL(config.databaseUrl);
	// No override: the bench drops and re-creates its database.
	assertLoopbackDatabase(url.toString(), false);
	url.pathname = `/${DB_NAME}`;
	return url.toString();
}

async function freshDatabase(url: string): Promise<void> {
	const admin = new URL(url);
	admin.pathname = '/postgres';
	const knex = createDb(admin.toString());
	try {
		await knex.raw('drop database if exists ?? with (force)', [DB_NAME]);
		await knex.raw('create database ??', [DB_NAME]);
	} finally {
		await knex.destroy();
	}
}

async function dropDatabase(url: string): Promise<void> {
	const admin = new URL(url);
	admin.pathname = '/postgres';
	const knex = createDb(admin.toString());
	try {
		await knex.raw('drop database if exists ?? with (force)', [DB_NAME]);
	} finally {
		await knex.destroy();
	}
}

/**
 * Migrates the fresh database and seeds the scale shop with a lead to sign in as, the way
 * `npm start` does: the least-privilege roles first (scripts/db-roles.ts), then migrations and
 * seed as the owner role, so the servers can log in as the app role (docs/SECURITY.md).
 */
async function seedBenchShop(url: string): Promise<void> {
	execFileSync(join(root, 'node_modules/.bin/tsx'), ['scripts/db-roles.ts'], {
		cwd: root,
		env: { ...process.env, DATABASE_URL: url },
		stdio: ['ignore', 'ignore', 'inherit']
	});
	const knex = createDb(url, { role: OWNER_ROLE });
	try {
		await migrateAll(knex);
		const shop = await provisionShop(knex, { name: 'Bench Machining', slug: SHOP_SLUG });
		const [u] = await knex('public.users')
			.insert({
				email: LEAD.email,
				name: 'Bench Lead',
				password_hash: await hashPassword(LEAD.password)
			})
			.returning('id');
		await knex('public.memberships').insert({ user_id: u.id, shop_id: shop.id, role: 'lead' });
		await seedScaleShop(knex, shop, SCALE.machines, SCALE.readings);
		// BENCH_SHOP_RLS=off: the shop's row-level security switched off, to see what it costs.
		if (process.env.BENCH_SHOP_RLS === 'off') {
			const tables: string[] = await knex('pg_tables')
				.where({ schemaname: shop.schemaName })
				.pluck('tablename');
			for (const t of tables)
				await knex.raw('alter table ??.?? disable row level security', [shop.schemaName, t]);
		}
	} finally {
		await knex.destroy();
	}
}

async function freePort(): Promise<number> {
	const server = createServer();
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	const { port } = server.address() as AddressInfo;
	await new Promise<void>((resolve) => server.close(() => resolve()));
	return port;
}

async function waitFor(url: string, ms = 30_000): Promise<void> {
	const end = Date.now() + ms;
	for (;;) {
		try {
			await fetch(url);
			return;
		} catch {
			if (Date.now() > end) throw new Error(`nothing answered at ${url}`);
			await new Promise((r) => setTimeout(r, 200));
		}
	}
}

function startProcess(args: string[], env: NodeJS.ProcessEnv, name: string): ChildProcess {
	const child = spawn(process.execPath, args, {
		cwd: root,
		env,
		stdio: ['ignore', 'pipe', 'pipe']
	});
	let tail = '';
	const keep = (b: Buffer) => (tail = (tail + b.toString()).slice(-4000));
	child.stdout!.on('data', keep);
	child.stderr!.on('data', keep);
	child.on('exit', (code) => {
		if (code) console.error(`${name} exited with ${code}:\n${tail}`);
	});
	children.push(child);
	return child;
}

/** Signs in through the real form action; returns the cookies to send. */
async function signIn(origin: string): Promise<string> {
	const res = await fetch(`${origin}/signin`, {
		method: 'POST',
		redirect: 'manual',
		headers: { origin, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
		body: new URLSearchParams({ email: LEAD.email, password: LEAD.password, next: '/shops' })
	});
	if (![302, 303].includes(res.status)) throw new Error(`sign-in answered ${res.status}`);
	const cookies = res.headers.getSetCookie().map((c) => c.split(';')[0]);
	if (!cookies.some((c) => /session-token=/.test(c))) throw new Error('sign-in set no session');
	return cookies.join('; ');
}

interface Figures {
	name: string;
	url: string;
	requests: number;
	requestsPerSecond: number;
	p50: number;
	p95: number;
	p99: number;
	max: number;
	non2xx: number;
	errors: number;
	timeouts: number;
	bytesPerResponse: number;
}

const percentile = (sorted: number[], p: number) =>
	sorted.length === 0
		? NaN
		: sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)];

async function load(
	name: string,
	url: string,
	headers: Record<string, string>,
	seconds: number
): Promise<Figures> {
	const times: number[] = [];
	let bytes = 0;
	const instance = autocannon({ url, connections: CONNECTIONS, duration: seconds, headers });
	instance.on('response', (_client, statusCode, resBytes, responseTime) => {
		times.push(responseTime);
		bytes += resBytes;
	});
	const result = await instance;
	times.sort((a, b) => a - b);
	const round = (n: number) => Math.round(n * 10) / 10;
	return {
		name,
		url,
		requests: times.length,
		requestsPerSecond: Math.round(times.length / seconds),
		p50: round(percentile(times, 50)),
		p95: round(percentile(times, 95)),
		p99: round(percentile(times, 99)),
		max: round(times[times.length - 1] ?? NaN),
		non2xx: result.non2xx,
		errors: result.errors,
		timeouts: result.timeouts,
		bytesPerResponse: times.length ? Math.round(bytes / times.length) : 0
	};
}

/** A bare node:http server in its own process: the constant JSON, nothing else. */
const BARE_SERVER = `
const http = require('node:http');
const body = JSON.stringify({ ok: true, service: 'bare' });
const server = http.createServer((req, res) => {
	res.writeHead(200, { 'content-type': 'application/json', 'content-length': Buffer.byteLength(body) });
	res.end(body);
});
server.listen(Number(process.env.PORT), '127.0.0.1');
`;

async function main(): Promise<void> {
	const dbUrl = benchDatabaseUrl();
	const la = () =>
		loadavg()
			.map((l) => l.toFixed(2))
			.join(' ');
	console.log(`fleet bench: fresh database ${DB_NAME}`);
	let t = Date.now();
	await freshDatabase(dbUrl);
	await seedBenchShop(dbUrl);
	console.log(
		`fleet bench: seeded ${SCALE.machines} machines, ${SCALE.machines * 20} tools, ${SCALE.readings} readings in ${((Date.now() - t) / 1000).toFixed(1)} s`
	);

	if (process.env.BENCH_SKIP_BUILD !== '1') {
		console.log('fleet bench: production build (vite build; BENCH_SKIP_BUILD=1 to reuse build/)');
		t = Date.now();
		execFileSync(process.execPath, [join(root, 'node_modules/vite/bin/vite.js'), 'build'], {
			cwd: root,
			stdio: ['ignore', 'ignore', 'inherit']
		});
		console.log(`fleet bench: built in ${((Date.now() - t) / 1000).toFixed(0)} s`);
	}

	// One secret for both servers, so the one sign-in's cookie is good on either; the seed above
	// keyed the shop with it (db/shop-token.ts).
	const authSecret = BENCH_SECRET;
	const appUrl = new URL(dbUrl);
	appUrl.username = APP_ROLE;
	appUrl.password = '';
	const serverEnv = (port: number, origin: string, extra: NodeJS.ProcessEnv = {}) => ({
		...process.env,
		NODE_ENV: 'production',
		HOST: '127.0.0.1',
		PORT: String(port),
		ORIGIN: origin,
		DATABASE_URL: dbUrl,
		// As shipped: the least-privilege app role (scripts/env.sh would point at the dev database).
		DATABASE_APP_URL: appUrl.toString(),
		AUTH_SECRET: authSecret,
		AUTH_TRUST_HOST: 'true',
		...extra
	});
	const appPort = await freePort();
	const origin = `http://127.0.0.1:${appPort}`;
	startProcess(['build'], serverEnv(appPort, origin), 'production server');
	const uncachedPort = await freePort();
	const uncachedOrigin = `http://127.0.0.1:${uncachedPort}`;
	startProcess(
		['build'],
		serverEnv(uncachedPort, uncachedOrigin, { FLEET_BOARD_CACHE: 'off' }),
		'production server, board cache off'
	);
	const barePort = await freePort();
	startProcess(['-e', BARE_SERVER], { PATH: process.env.PATH, PORT: String(barePort) }, 'bare');
	await waitFor(`${origin}/healthz`);
	await waitFor(`${uncachedOrigin}/healthz`);
	await waitFor(`http://127.0.0.1:${barePort}/`);

	const cookie = await signIn(origin);
	const boardPath = `/api/v1/shops/${SHOP_SLUG}/fleet`;
	for (const o of [origin, uncachedOrigin]) {
		const check = await fetch(o + boardPath, { headers: { cookie } });
		const board = (await check.json()) as { machines?: unknown[] };
		if (check.status !== 200 || board.machines?.length !== SCALE.machines)
			throw new Error(
				`the board API at ${o} answered ${check.status} with ${board.machines?.length} machines`
			);
	}

	console.log(
		`fleet bench: node ${process.version}, ${cpus().length} × ${cpus()[0]?.model ?? 'cpu'}, ` +
			`${CONNECTIONS} connections, ${SECONDS} s each after ${WARMUP_SECONDS} s warm-up; load average before: ${la()}`
	);
	const loadBefore = loadavg();
	// What the board page's polling sends: a browser always offers gzip (the board API uses it;
	// the bare endpoints ignore it).
	const browser = { 'accept-encoding': 'gzip, deflate, br' };
	const run = async (name: string, url: string, headers: Record<string, string> = {}) => {
		await load('warm-up', url, { ...browser, ...headers }, WARMUP_SECONDS);
		return load(name, url, { ...browser, ...headers }, SECONDS);
	};
	const nodeBare = await run('bare node:http (reference)', `http://127.0.0.1:${barePort}/`);
	const appBare = await run('bare app endpoint /livez', `${origin}/livez`);
	const boardFigures = await run('board API (200 machines)', origin + boardPath, { cookie });
	const plain = await run('board API, no gzip', origin + boardPath, {
		cookie,
		'accept-encoding': 'identity'
	});
	const uncached = await run('board API, cache off', uncachedOrigin + boardPath, { cookie });
	const loadAfter = loadavg();

	for (const f of [nodeBare, appBare, boardFigures, plain, uncached]) {
		console.log(
			`${f.name.padEnd(28)} ${String(f.requestsPerSecond).padStart(6)} req/s  ` +
				`p50 ${f.p50} ms  p95 ${f.p95} ms  p99 ${f.p99} ms  max ${f.max} ms  ` +
				`(${f.requests} responses, ${f.bytesPerResponse} B each, non-2xx ${f.non2xx}, errors ${f.errors}, timeouts ${f.timeouts})`
		);
	}
	const share = boardFigures.requestsPerSecond / appBare.requestsPerSecond;
	const goals = {
		p95Under50ms: boardFigures.p95 < 50,
		atLeastHalfBareThroughput: share >= 0.5
	};
	console.log(
		`goals: board p95 < 50 ms: ${goals.p95Under50ms ? 'met' : 'NOT met'} (${boardFigures.p95} ms); ` +
			`≥ half the bare app endpoint's throughput: ${goals.atLeastHalfBareThroughput ? 'met' : 'NOT met'} (${(share * 100).toFixed(1)} %)`
	);
	console.log(`load average after: ${la()}`);
	mkdirSync(outDir, { recursive: true });
	writeFileSync(
		join(outDir, 'fleet.json'),
		JSON.stringify(
			{
				node: process.version,
				cpus: cpus().length,
				connections: CONNECTIONS,
				seconds: SECONDS,
				loadavgBefore: loadBefore,
				loadavgAfter: loadAfter,
				bareNode: nodeBare,
				bareApp: appBare,
				board: boardFigures,
				boardNoGzip: plain,
				boardCacheOff: uncached,
				throughputShare: share,
				goals
			},
			null,
			2
		)
	);
	await stopChildren();
	if (process.env.BENCH_KEEP_DB !== '1') await dropDatabase(dbUrl);
}

main().then(
	() => process.exit(0),
	async (e) => {
		console.error(e);
		await stopChildren();
		process.exit(1);
	}
);
