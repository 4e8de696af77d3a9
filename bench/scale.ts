/**
 * `npm run bench -- scale` (issue 19): how cost grows with the number of shops (schemas).
 *
 * A fresh database of its own (`datumkeep_scale_bench`, loopback only) grows to each size in
 * BENCH_SCALE_SIZES (default 10,100,1000 — the 1,000 step takes a while: run it once). Shops
 * are made by the real `provisionShop` (sign-up's schema creation) and given bulk data
 * (tests/fixtures/fleet-data.ts without the per-shop ANALYZE): 3 machines with 20 tools and 60
 * readings each, and every 20th shop 50 machines with 1,000 readings. At each size:
 *
 * - sign-up: the time of `provisionShop` for each of the last 3 shops made, one by one (the
 *   others are grown BENCH_SCALE_CONCURRENCY, default 6, at a time, also by `provisionShop`);
 * - the catalog: database size, pg_class rows, the size of pg_catalog itself;
 * - migrating every shop schema for one new shop migration (an added column and index), one
 *   transaction per schema through Knex's migrator, as `npm run migrate` does;
 * - the nightly checks of every shop: one `nightly` job per shop on the shop-checks queue of
 *   `npm run cluster`'s 2 workers (2 jobs at a time each), wall time until all are done, and
 *   where the time goes (per-shop check time for small and big shops, from check_runs), and
 *   the goal's shape (1,000 shops × 50 machines, not grown here) EXTRAPOLATED at 1,000 shops
 *   from the wall time and the per-machine check cost (see nightlyChecks);
 * - the fleet board API of a 50-machine shop through HAProxy: round robin over 2 app nodes,
 *   and pinned to 1 node (`x-datumkeep-pin`), in turns twice, BENCH_SECONDS (8) each, 20 connections.
 *
 * The cluster (scripts/cluster.sh: HAProxy, 2 nodes, PgBouncer, 2 workers) runs on
 * BENCH_CLUSTER_PORT_BASE (default CLUSTER_PORT_BASE + 40, else 4740) against this database.
 * Figures go to the console and bench/out/scale.json; docs/PERFORMANCE.md explains them. The
 * database is dropped at the end unless BENCH_KEEP_DB=1.
 */
import { execFileSync, spawn, type ChildProcess } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import { mkdirSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import autocannon from 'autocannon';
import { Queue, QueueEvents } from 'bullmq';
import { Redis } from 'ioredis';
import type { Knex } from 'knex';
import { hashPassword } from '$lib/server/auth/password';
import { config, reloadConfig } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { assertLoopbackDatabase } from '$lib/server/db/loopback';
import { migratePublic } from '$lib/server/db/migrate';
import { OWNER_ROLE } from '$lib/server/db/roles';
import { provisionShop, type ProvisionedShop } from '$lib/server/shops/provision';
import { seedScaleShop } from '../tests/fixtures/fleet-data';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..');
const DB_NAME = 'datumkeep_scale_bench';
/** The benchmark's AUTH_SECRET, in this process too: shops provisioned here are keyed with it
 * (db/shop-token.ts), and the servers it starts must open them. */
const BENCH_SECRET = (process.env.AUTH_SECRET ||= randomBytes(32).toString('hex'));
reloadConfig();
const SIZES = (process.env.BENCH_SCALE_SIZES ?? '10,100,1000').split(',').map(Number);
const SECONDS = Number(process.env.BENCH_SECONDS ?? 8);
const CONNECTIONS = 20;
const BIG_EVERY = 20;
const PORT_BASE = Number(
	process.env.BENCH_CLUSTER_PORT_BASE ?? Number(process.env.CLUSTER_PORT_BASE ?? 4700) + 40
);
const QUEUE_PREFIX = `${process.env.QUEUE_PREFIX ?? 'datumkeep'}-scale`;
const GROW_CONCURRENCY = Number(process.env.BENCH_SCALE_CONCURRENCY ?? 6);
const SIGNUPS = 3;
const LEAD = { email: 'lead@scale.example', password: 'scale-bench-password' };

const secs = (ms: number) => Math.round(ms / 100) / 10;
const median = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)] ?? NaN;
const la = () =>
	loadavg()
		.map((l) => l.toFixed(2))
		.join(' ');
const say = (s: string) =>
	console.log(`scale bench ${new Date().toISOString().slice(11, 19)}: ${s}`);

function benchUrl(): string {
	const url = new URL(config.databaseUrl);
	assertLoopbackDatabase(url.toString(), false); // it drops and re-creates its database
	url.pathname = `/${DB_NAME}`;
	return url.toString();
}

async function onAdmin(url: string, fn: (k: Knex) => Promise<unknown>) {
	const admin = new URL(url);
	admin.pathname = '/postgres';
	const k = createDb(admin.toString());
	try {
		await fn(k);
	} finally {
		await k.destroy();
	}
}

/** One shop: provisioned (timed), seeded, with a finished check so workers skip a first check. */
async function addShop(knex: Knex, i: number): Promise<{ shop: ProvisionedShop; ms: number }> {
	const t = performance.now();
	const shop = await provisionShop(knex, { name: `Scale Shop ${i}`, slug: `scale-shop-${i}` });
	const ms = performance.now() - t;
	const machines = i % BIG_EVERY === 1 ? 50 : 3;
	await seedScaleShop(knex, shop, machines, machines * 20, false);
	await knex(`${shop.schemaName}.check_runs`).insert({
		job_id: `seed-${i}`,
		trigger: 'manual',
		checked_at: knex.fn.now(),
		finished_at: knex.fn.now(),
		status: 'done'
	});
	return { shop, ms };
}

async function catalog(knex: Knex) {
	const { rows } = await knex.raw(
		`select pg_database_size(current_database())::bigint as db_bytes,
			(select count(*) from pg_class)::int as pg_class_rows,
			(select sum(pg_total_relation_size(c.oid)) from pg_class c
				join pg_namespace n on n.oid = c.relnamespace
				where n.nspname = 'pg_catalog' and c.relkind = 'r')::bigint as catalog_bytes`
	);
	const r = rows[0];
	return {
		databaseMiB: Math.round(Number(r.db_bytes) / 1048576),
		pgClassRows: r.pg_class_rows,
		catalogMiB: Math.round(Number(r.catalog_bytes) / 1048576)
	};
}

/** Every shop schema migrated for one new migration, one transaction each (as migrateAll). */
async function migrateAllFor(knex: Knex, size: number, schemas: string[]) {
	const name = `29991231${String(size).padStart(6, '0')}_bench_add_machine_note`;
	const column = `bench_note_${size}`;
	// Only the new migration in the list (validation off): the others are in knex_migrations.
	const list: Record<string, Knex.Migration> = {
		[name]: {
			up: async (k) => {
				await k.schema.alterTable('machines', (t) => t.text(column));
				await k.schema.alterTable('machines', (t) => t.index([column], `machines_${column}_idx`));
			},
			down: async (k) => k.schema.alterTable('machines', (t) => t.dropColumn(column))
		}
	};
	const source: Knex.MigrationSource<string> = {
		getMigrations: async () => Object.keys(list).sort(),
		getMigrationName: (n) => n,
		getMigration: async (n) => list[n]
	};
	const t = performance.now();
	for (const schema of schemas) {
		await knex.transaction(async (trx) => {
			await trx.raw('set local search_path to ??, public', [schema]);
			await trx.migrate.latest({
				migrationSource: source,
				schemaName: schema,
				disableMigrationsListValidation: true
			});
		});
	}
	return performance.now() - t;
}

/** Nightly jobs for every shop on the cluster's queue; wall time until the queue is empty. */
async function nightlyChecks(knex: Knex, queue: Queue, size: number, shops: ProvisionedShop[]) {
	// Counted by the queue's events: the queue itself always holds delayed jobs (the schedulers).
	const eventsRedis = new Redis(config.redisUrl, { maxRetriesPerRequest: null });
	const events = new QueueEvents('shop-checks', { connection: eventsRedis, prefix: QUEUE_PREFIX });
	await events.waitUntilReady();
	const mine = `bench-${size}-`;
	let finished = 0;
	let failed = 0;
	const allDone = new Promise<void>((resolve) => {
		const count = (kind: 'ok' | 'failed') => (args: { jobId: string }) => {
			if (!args.jobId.startsWith(mine)) return;
			if (kind === 'failed') failed++;
			if (++finished === shops.length) resolve();
		};
		events.on('completed', count('ok'));
		events.on('failed', count('failed'));
	});
	const t = performance.now();
	await queue.addBulk(
		shops.map((s) => ({
			name: 'nightly',
			data: { shopId: s.id },
			opts: { jobId: `bench-${size}-${s.id}`, attempts: 3, removeOnComplete: true }
		}))
	);
	await allDone;
	const wallMs = performance.now() - t;
	await events.close();
	eventsRedis.disconnect();
	// Where the time goes: each shop's own check time, from its check_runs row.
	const union = shops
		.map(
			(s) =>
				`select ${s.id} as shop_id, status, machines, extract(epoch from finished_at - started_at) * 1000 as ms
				from ${s.schemaName}.check_runs where job_id = 'bench-${size}-${s.id}'`
		)
		.join(' union all ');
	const { rows } = await knex.raw(union);
	const done = rows.filter((r: { status: string }) => r.status === 'done');
	const small = done
		.filter((r: { machines: number }) => r.machines < 50)
		.map((r: { ms: number }) => Number(r.ms));
	const big = done
		.filter((r: { machines: number }) => r.machines >= 50)
		.map((r: { ms: number }) => Number(r.ms));
	const machines = done.reduce((n: number, r: { machines: number }) => n + r.machines, 0);
	const sumMs = done.reduce((n: number, r: { ms: number }) => n + Number(r.ms), 0);
	const overlap = sumMs / wallMs;
	// The goal's shape (1,000 shops × 50 machines) is not grown here: EXTRAPOLATED (at the
	// 1,000-shop size) as this run's wall time plus the machines it lacks at the per-machine
	// cost (big minus small shops' median check time over the 47 machines between them), added
	// serially unless the checks overlapped (2 workers × 2 jobs, but 2 shared cores).
	const perMachineMs = (median(big) - median(small)) / 47;
	const goalShapeEstimateS =
		size === 1000
			? secs(wallMs + ((50_000 - machines) * perMachineMs) / Math.max(overlap, 1))
			: null;
	return {
		wallS: secs(wallMs),
		shopsDone: done.length,
		jobsFailed: failed,
		machines,
		machinesPerSecond: Math.round(machines / (wallMs / 1000)),
		smallShopMedianMs: Math.round(median(small)),
		bigShopMedianMs: Math.round(median(big)),
		sumOfShopCheckS: secs(sumMs),
		overlap: Math.round(overlap * 100) / 100,
		perMachineMs: Math.round(perMachineMs * 10) / 10,
		goalShapeEstimateS
	};
}

async function load(url: string, headers: Record<string, string>) {
	await autocannon({ url, connections: CONNECTIONS, duration: 2, headers }); // warm-up
	const times: number[] = [];
	const instance = autocannon({ url, connections: CONNECTIONS, duration: SECONDS, headers });
	instance.on('response', (_c, _s, _b, rt) => times.push(rt));
	const result = await instance;
	times.sort((a, b) => a - b);
	const p = (q: number) => times[Math.min(times.length - 1, Math.ceil(q * times.length) - 1)];
	return {
		requestsPerSecond: Math.round(times.length / SECONDS),
		p50: Math.round(p(0.5) * 10) / 10,
		p95: Math.round(p(0.95) * 10) / 10,
		non2xx: result.non2xx,
		errors: result.errors
	};
}

function startCluster(env: NodeJS.ProcessEnv): Promise<{ child: ChildProcess; url: string }> {
	const child = spawn('bash', [join(root, 'scripts/cluster.sh')], {
		cwd: root,
		env,
		stdio: ['ignore', 'pipe', 'pipe']
	});
	let out = '';
	return new Promise((resolve, reject) => {
		const onData = (b: Buffer) => {
			out += b.toString();
			const url = /cluster ready at (\S+)/.exec(out)?.[1];
			if (url) resolve({ child, url });
		};
		child.stdout!.on('data', onData);
		child.stderr!.on('data', onData);
		child.once('exit', (code) => reject(new Error(`cluster exited (${code}):\n${out}`)));
	});
}

async function signIn(origin: string): Promise<string> {
	const res = await fetch(`${origin}/signin`, {
		method: 'POST',
		redirect: 'manual',
		headers: { origin, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
		body: new URLSearchParams({ email: LEAD.email, password: LEAD.password, next: '/shops' })
	});
	if (![302, 303].includes(res.status)) throw new Error(`sign-in answered ${res.status}`);
	return res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.join('; ');
}

async function main() {
	const url = benchUrl();
	say(`node ${process.version}, ${cpus().length} CPUs, load average ${la()} (shared machine)`);
	await onAdmin(url, async (k) => {
		await k.raw('drop database if exists ?? with (force)', [DB_NAME]);
		await k.raw('create database ??', [DB_NAME]);
	});
	// The least-privilege roles and this database's grants, as npm start and npm test make them
	// (provisionShop creates a shop's schema as the owner role).
	execFileSync(join(root, 'node_modules/.bin/tsx'), [join(root, 'scripts/db-roles.ts')], {
		cwd: root,
		env: { ...process.env, DATABASE_URL: url },
		stdio: 'inherit'
	});
	const knex = createDb(url);
	let cluster: ChildProcess | undefined;
	const redis = new Redis(config.redisUrl, { maxRetriesPerRequest: null });
	const queue = new Queue('shop-checks', { connection: redis, prefix: QUEUE_PREFIX });
	const results: Record<string, unknown>[] = [];
	try {
		// As scripts/migrate.ts: logged in as the superuser, migrating as the owner role (so the
		// provisioning functions, security definer, create shop schemas as the owner role).
		const owner = createDb(url, { role: OWNER_ROLE });
		try {
			await migratePublic(owner);
		} finally {
			await owner.destroy();
		}
		const [lead] = await knex('public.users')
			.insert({
				email: LEAD.email,
				name: 'Scale Lead',
				password_hash: await hashPassword(LEAD.password)
			})
			.returning('id');
		const shops: (ProvisionedShop & { member?: boolean })[] = [];
		let lbUrl = '';
		let cookie = '';
		for (const size of SIZES) {
			const t = performance.now();
			// Grown GROW_CONCURRENCY shops at a time, the last SIGNUPS one by one: those are timed
			// as sign-up at this size (provisionShop is sign-up's schema creation).
			let next = shops.length + 1;
			const grow = async () => {
				while (next <= size - SIGNUPS) {
					const { shop } = await addShop(knex, next++);
					shops.push(shop);
					if (shops.length % 100 === 0) say(`${shops.length} shops (load ${la()})`);
				}
			};
			await Promise.all(Array.from({ length: GROW_CONCURRENCY }, grow));
			const provisionMs: number[] = [];
			while (shops.length < size) {
				const { shop, ms } = await addShop(knex, next++);
				shops.push(shop);
				provisionMs.push(ms);
			}
			shops.sort((a, b) => a.id - b.id);
			// The board bench's shop: scale-shop-1, one of the 50-machine shops.
			const first = shops.find((x) => x.slug === 'scale-shop-1')!;
			if (!first.member) {
				await knex('public.memberships').insert({
					user_id: lead.id,
					shop_id: first.id,
					role: 'lead'
				});
				first.member = true;
			}
			const growS = secs(performance.now() - t);
			if (!cluster) {
				const started = await startCluster({
					...process.env,
					DATABASE_URL: url,
					QUEUE_PREFIX,
					CLUSTER_PORT_BASE: String(PORT_BASE),
					AUTH_SECRET: BENCH_SECRET,
					CLUSTER_NODES: '2',
					CLUSTER_WORKERS: '2',
					FLEET_BOARD_CACHE: process.env.FLEET_BOARD_CACHE ?? 'on'
				});
				cluster = started.child;
				lbUrl = started.url;
				cookie = await signIn(lbUrl);
				say(`cluster at ${lbUrl}`);
			}
			say(`${size} shops: grown in ${growS} s; measuring`);
			const cat = await catalog(knex);
			const migrateMs = await migrateAllFor(
				knex,
				size,
				shops.map((s) => s.schemaName)
			);
			say(`${size} shops: migrated all schemas in ${secs(migrateMs)} s`);
			const checks = await nightlyChecks(knex, queue, size, shops);
			say(`${size} shops: nightly checks in ${checks.wallS} s`);
			const board = `${lbUrl}/api/v1/shops/scale-shop-1/fleet`;
			const headers = { cookie, 'accept-encoding': 'gzip' };
			// Taken in turns (2, 1, 2, 1): load from other users of the machine hits both alike.
			const two1 = await load(board, headers);
			const one1 = await load(board, { ...headers, 'x-datumkeep-pin': 'node-1' });
			const two2 = await load(board, headers);
			const one2 = await load(board, { ...headers, 'x-datumkeep-pin': 'node-1' });
			const twoNodes = [two1, two2];
			const oneNode = [one1, one2];
			const row = {
				shops: size,
				growS,
				signUpMs: provisionMs.map(Math.round),
				...cat,
				migrateAllS: secs(migrateMs),
				migratePerSchemaMs: Math.round(migrateMs / size),
				checks,
				fleetApi: {
					twoNodes,
					oneNode,
					ratio:
						Math.round(
							((two1.requestsPerSecond + two2.requestsPerSecond) /
								(one1.requestsPerSecond + one2.requestsPerSecond)) *
								100
						) / 100
				},
				loadAverage: la()
			};
			results.push(row);
			console.log(JSON.stringify(row));
		}
	} finally {
		if (cluster && cluster.exitCode === null) {
			const exited = new Promise((r) => cluster!.once('exit', r));
			cluster.kill('SIGTERM');
			await Promise.race([exited, new Promise((r) => setTimeout(r, 15_000))]);
		}
		await queue.obliterate({ force: true }).catch(() => {});
		await queue.close();
		redis.disconnect();
		await knex.destroy();
		if (process.env.BENCH_KEEP_DB !== '1')
			await onAdmin(url, (k) => k.raw('drop database if exists ?? with (force)', [DB_NAME]));
	}
	mkdirSync(join(here, 'out'), { recursive: true });
	writeFileSync(
		join(here, 'out', 'scale.json'),
		JSON.stringify({ node: process.version, cpus: cpus().length, results }, null, 2)
	);
}

main()
	.then(() => process.exit(0))
	.catch((e) => {
		console.error(e);
		process.exit(1);
	});
