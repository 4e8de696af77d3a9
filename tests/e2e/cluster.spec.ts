import { execFileSync } from 'node:child_process';
import { expect, request, test, type APIRequestContext } from '@playwright/test';
import { Queue } from 'bullmq';
import { Redis } from 'ioredis';
import knex, { type Knex } from 'knex';
import { withShop } from '../../src/lib/server/db/tenant';
import { slowProxy, startCluster, type RunningCluster } from './cluster-helpers';
import { DEMO_PASSWORD, FERNHILL, QUARRY } from './helpers';

/**
 * Scaling out, on real parts: `npm run cluster` (HAProxy → 2 app nodes, PgBouncer in transaction
 * pooling, 2 workers) with its own ports, its own database (`…_cluster_test`, fresh, demo
 * seed) and its own Redis database and queue prefix, so it never meets the other specs' server.
 * Node 2's change feed goes through a proxy that delays what PostgreSQL sends by FEED_DELAY_MS:
 * its caches hear changes late, as a node on a busy network might.
 */
const FEED_DELAY_MS = 700;
const base = Number(process.env.TEST_CLUSTER_PORT_BASE ?? 4660);
const testDb = new URL(
	process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/datumkeep_test'
);
const dbName = `${testDb.pathname.slice(1).replace(/_test$/, '')}_cluster_test`;
const directUrl = new URL(testDb);
directUrl.pathname = `/${dbName}`;
const slowFeedUrl = new URL(directUrl);
slowFeedUrl.host = `127.0.0.1:${base + 30}`;
// PgBouncer's alias of the same database with ONE server connection (scripts/cluster.sh).
const singleUrl = new URL(directUrl);
singleUrl.host = `127.0.0.1:${base + 1}`;
singleUrl.pathname = `/single_${dbName}`;
const redisUrl = new URL(process.env.REDIS_URL ?? 'redis://127.0.0.1:63799/1');
redisUrl.pathname = `/${(Number(redisUrl.pathname.slice(1) || 0) + 2) % 16}`;
const queuePrefix = `${process.env.QUEUE_PREFIX ?? 'datumkeep'}-cluster`;

let cluster: RunningCluster | undefined;
let proxy: Awaited<ReturnType<typeof slowProxy>> | undefined;
let direct: Knex;
let lead: APIRequestContext;
let observer: APIRequestContext;
const pin = (n: number) => ({ 'x-datumkeep-pin': `node-${n}` });
const shopRow = (slug: string) =>
	direct('public.shops').where({ slug }).first('id', 'schema_name as schemaName');

async function signIn(url: string, email: string) {
	const ctx = await request.newContext({ baseURL: url, extraHTTPHeaders: { Origin: url } });
	const res = await ctx.post('/signin', {
		form: { email, password: DEMO_PASSWORD, next: '/shops' },
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	expect([302, 303], `sign-in as ${email} through HAProxy`).toContain(res.status());
	return ctx;
}

/** Acknowledged findings on the fleet board JSON, as node `n` answers it. */
async function acknowledgedOn(client: APIRequestContext, n: number): Promise<number> {
	const res = await client.get(`/api/v1/shops/${FERNHILL.slug}/fleet`, { headers: pin(n) });
	expect(res.status()).toBe(200);
	expect(res.headers()['x-datumkeep-node']).toBe(`node-${n}`);
	const board = (await res.json()) as { machines: { findings: { acknowledged: number } }[] };
	return board.machines.reduce((sum, m) => sum + m.findings.acknowledged, 0);
}

test.describe.configure({ mode: 'serial' });

test.beforeAll(async () => {
	test.setTimeout(180_000);
	execFileSync('npx', ['tsx', 'scripts/create-db.ts', '--fresh'], {
		env: { ...process.env, DATABASE_URL: directUrl.href },
		stdio: 'pipe'
	});
	const r = new Redis(redisUrl.href);
	await r.flushdb();
	r.disconnect();
	proxy = await slowProxy(
		base + 30,
		{ host: directUrl.hostname, port: Number(directUrl.port) },
		FEED_DELAY_MS
	);
	cluster = await startCluster({
		CLUSTER_PORT_BASE: String(base),
		CLUSTER_NODES: '2',
		CLUSTER_WORKERS: '2',
		CLUSTER_BUILD: 'never', // npm test has just built; never rebuild under the running server
		DATABASE_URL: directUrl.href,
		REDIS_URL: redisUrl.href,
		QUEUE_PREFIX: queuePrefix,
		CLUSTER_WORKER_ENV: 'SHOP_CHECKS_LOCK_MS=2000 SHOP_CHECKS_BACKOFF_MS=500',
		CLUSTER_NODE_ENV_2: `DATABASE_DIRECT_URL=${slowFeedUrl.href}`
	});
	direct = knex({ client: 'pg', connection: directUrl.href, pool: { min: 0, max: 3 } });
	lead = await signIn(cluster.url, FERNHILL.lead);
	observer = await signIn(cluster.url, FERNHILL.admin);
	// Starts node 2's (slow) change feed, so its caches are live by the time they are needed.
	await acknowledgedOn(lead, 2);
});

test.afterAll(async () => {
	await lead?.dispose();
	await observer?.dispose();
	await direct?.destroy();
	await cluster?.stop();
	await proxy?.close();
});

test('two shops interleaved over one pooled server connection see only their own schema', async () => {
	const a = await shopRow(FERNHILL.slug);
	const b = await shopRow(QUARRY.slug);
	const names = async (schema: string) =>
		(await direct.withSchema(schema).table('machines').pluck('name')).map(String).sort();
	const [namesA, namesB] = [await names(a.schemaName), await names(b.schemaName)];
	expect(namesA).not.toEqual(namesB);

	// Two app-like pools, both behind PgBouncer's pool of one server connection.
	const poolA = knex({ client: 'pg', connection: singleUrl.href, pool: { min: 0, max: 3 } });
	const poolB = knex({ client: 'pg', connection: singleUrl.href, pool: { min: 0, max: 3 } });
	try {
		const look = (pool: Knex, shop: { id: number; schemaName: string }) =>
			withShop(
				shop,
				async (trx) => {
					const { rows } = await trx.raw(
						"select pg_backend_pid() as pid, current_setting('search_path') as path, pg_sleep(0.002)"
					);
					const machines = (await trx('machines').pluck('name')).map(String).sort();
					return {
						shop: shop.schemaName,
						pid: rows[0].pid as number,
						path: String(rows[0].path),
						machines
					};
				},
				pool
			);
		const results = [];
		for (let round = 0; round < 15; round++) {
			results.push(
				...(await Promise.all([look(poolA, a), look(poolB, b), look(poolA, a), look(poolB, b)]))
			);
		}
		// One server connection served every transaction of both shops…
		expect(new Set(results.map((r) => r.pid)).size).toBe(1);
		// …and each saw only its own schema.
		for (const r of results) {
			expect(r.path.startsWith(r.shop)).toBe(true);
			expect(r.machines).toEqual(r.shop === a.schemaName ? namesA : namesB);
		}
		// SET LOCAL ended with each transaction: the shared connection is back to the default.
		const after = await poolB.raw("select current_setting('search_path') as path");
		expect(after.rows[0].path).toBe('"$user", public');

		// The control: a session-level SET on that connection does reach the other pool's next
		// query — the leak this test would catch if withShop used one.
		await poolA.raw('set search_path to ??, public', [a.schemaName]);
		const leaked = await poolB.raw("select current_setting('search_path') as path");
		expect(String(leaked.rows[0].path).startsWith(a.schemaName)).toBe(true);
		await poolB.raw('reset search_path');
	} finally {
		await poolA.destroy();
		await poolB.destroy();
	}
});

test('a write answered by one node is read on the other at once, though its feed is slow', async () => {
	const shop = await shopRow(FERNHILL.slug);
	// The demo's Mill 1 is flagged by the workers' first check at start.
	let finding: { id: number } | undefined;
	await expect
		.poll(
			async () =>
				(finding = await direct(`${shop.schemaName}.findings`)
					.where({ status: 'open' })
					.orderBy('id')
					.first('id')),
			{ timeout: 30_000 }
		)
		.toBeTruthy();

	// Node 2 caches the board once its (slow) feed, started in beforeAll, is live.
	await expect
		.poll(
			async () => (await (await lead.get('/healthz', { headers: pin(2) })).json()).changeFeed?.live,
			{ timeout: 20_000 }
		)
		.toBe(true);
	// The baseline once node 2 has heard everything written so far (the workers' first check,
	// the seed): its slow feed may still bring an older change in the first seconds.
	const acknowledgedInDb = async () =>
		Number(
			(
				await direct(`${shop.schemaName}.findings`)
					.where({ status: 'acknowledged' })
					.count('* as n')
			)[0].n
		);
	const settled = await acknowledgedInDb();
	await expect.poll(() => acknowledgedOn(lead, 2), { timeout: 20_000 }).toBe(settled);
	const before = await acknowledgedOn(lead, 2);
	expect(await acknowledgedOn(lead, 2)).toBe(before);

	// The lead acknowledges on node 1.
	const ack = await lead.post(`/shops/${FERNHILL.slug}/findings?/acknowledge`, {
		form: { findingId: String(finding!.id), comment: 'Checked at the machine; fine until Friday.' },
		headers: { ...pin(1), accept: 'text/html' }
	});
	expect(ack.status()).toBe(200);
	expect(ack.headers()['x-datumkeep-node']).toBe('node-1');
	const row = await direct(`${shop.schemaName}.findings`)
		.where({ id: finding!.id })
		.first('status');
	expect(row.status).toBe('acknowledged');

	// Someone who did not write, at once on node 2: its cache has not heard yet (the slow
	// feed), which is what the write cookie is for…
	expect(await acknowledgedOn(observer, 2)).toBe(before);
	// …and the lead, whose cookie says they wrote, gets node 2 to catch its feed up first.
	expect(await acknowledgedOn(lead, 2)).toBe(before + 1);
});

test('a check whose worker dies mid-job is finished once by the other worker', async () => {
	const shop = await shopRow(FERNHILL.slug);
	const connection = new Redis(redisUrl.href, { maxRetriesPerRequest: null });
	const queue = new Queue('shop-checks', { connection, prefix: queuePrefix });
	const blocker = await direct.transaction();
	try {
		// Whichever worker takes the job stops at its first write: the check is mid-job.
		await blocker.raw('lock table ??.check_runs in exclusive mode', [shop.schemaName]);
		const jobId = `cluster-kill-${Date.now()}`;
		await queue.add('check-now', { shopId: shop.id }, { jobId, attempts: 3 });
		let first = '';
		await expect
			.poll(async () => (first = (await queue.getJob(jobId))?.processedBy ?? ''), {
				timeout: 20_000
			})
			.toMatch(/^worker-[12]$/);
		const pid = cluster!.pids[first];
		expect(pid).toBeGreaterThan(0);
		process.kill(pid, 'SIGKILL');
		await blocker.commit();

		// The other worker finds the job stalled (its lock not renewed) and runs it to the end.
		await expect
			.poll(
				async () =>
					(await direct(`${shop.schemaName}.check_runs`).where({ job_id: jobId }).first('status'))
						?.status,
				{ timeout: 30_000 }
			)
			.toBe('done');
		const job = await queue.getJob(jobId);
		expect(job?.processedBy).toMatch(/^worker-[12]$/);
		expect(job?.processedBy).not.toBe(first);
		expect(job?.finishedOn).toBeTruthy();
		const runs = await direct(`${shop.schemaName}.check_runs`).where({ job_id: jobId }).count();
		expect(Number(runs[0].count)).toBe(1);
	} finally {
		if (!blocker.isCompleted()) await blocker.rollback();
		await queue.close();
		connection.disconnect();
	}
});
