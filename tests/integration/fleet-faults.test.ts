import { createServer, type AddressInfo, type Server, type Socket, connect } from 'node:net';
import { Worker, type Queue } from 'bullmq';
import type { RequestEvent } from '@sveltejs/kit';
import { Redis } from 'ioredis';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { config } from '$lib/server/config';
import { closeDb } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { producerConnection, QUEUE_PREFIX } from '$lib/server/queues/connection';
import {
	ChecksPausedError,
	enqueueCheckNow,
	jobOptions,
	shopChecksQueue,
	SHOP_CHECKS,
	type ShopCheckData
} from '$lib/server/queues/shop-checks';
import { workerConnection } from '$lib/server/queues/connection';
import { provisionShop } from '$lib/server/shops/provision';
import type { ShopRow } from '$lib/server/shops/queries';
import { startFakeSes, type FakeSes } from '../../fakes/ses';
import { firstChecks } from '../../workers/shop-checks/index';
import { processShopCheck } from '../../workers/shop-checks/processor';
import { testDb, uniqueSuffix } from './db';

/**
 * The faults the fleet checks must ride out, for real: Redis goes away (a TCP proxy in front of the shared Redis is
 * closed — the shared server itself is never stopped) and the fake SES is down (nothing
 * listens on its port until the test starts it). Also the first check of a never-checked shop,
 * which stands in for that day's nightly run so a new shop's lead gets a digest at once.
 */
const knex: Knex = testDb();
const DAY = 86_400_000;
const suffix = uniqueSuffix();
let shop: ShopRow;
const people: Record<'owner' | 'lead' | 'operator', { id: number; email: string; name: string }> =
	{} as never;

/** A TCP proxy to the test's Redis that can be taken down and brought back on the same port. */
class RedisProxy {
	private server: Server | undefined;
	private sockets = new Set<Socket>();
	port = 0;
	constructor(private target: URL) {}
	get url() {
		return `redis://127.0.0.1:${this.port}${this.target.pathname}`;
	}
	async up(): Promise<void> {
		if (this.server) return;
		const server = createServer((client) => {
			const upstream = connect(Number(this.target.port || 6379), this.target.hostname);
			for (const s of [client, upstream]) {
				this.sockets.add(s);
				s.on('close', () => this.sockets.delete(s));
				s.on('error', () => {});
			}
			client.pipe(upstream).pipe(client);
			client.on('close', () => upstream.destroy());
			upstream.on('close', () => client.destroy());
		});
		await new Promise<void>((resolve, reject) => {
			server.once('error', reject);
			server.listen(this.port, '127.0.0.1', resolve);
		});
		this.port = (server.address() as AddressInfo).port;
		this.server = server;
	}
	async down(): Promise<void> {
		const server = this.server;
		this.server = undefined;
		if (!server) return;
		const closed = new Promise<void>((resolve) => server.close(() => resolve()));
		for (const s of this.sockets) s.destroy();
		await closed;
	}
}

/** A loopback port with nothing listening on it (picked by the OS, then released). */
async function freePort(): Promise<number> {
	const server = createServer();
	await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
	const { port } = server.address() as AddressInfo;
	await new Promise<void>((resolve) => server.close(() => resolve()));
	return port;
}

async function until<T>(what: string, fn: () => Promise<T | undefined>, ms = 20_000): Promise<T> {
	const end = Date.now() + ms;
	for (;;) {
		const v = await fn().catch(() => undefined);
		if (v !== undefined && v !== null && v !== false) return v;
		if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
		await new Promise((r) => setTimeout(r, 100));
	}
}

/** A shop whose one machine has a tool measured 45 days ago: the check finds stale-age. */
async function staleShop(name: string): Promise<ShopRow> {
	const slug = `${name.toLowerCase().replace(/\W+/g, '-')}-${uniqueSuffix()}`;
	const created = await provisionShop(knex, { name, slug, timeZone: 'Europe/Berlin' });
	const row = await knex('shops').where({ id: created.id }).first();
	await withShop(
		created,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: 'Fault Mill', units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			await trx('reference_surfaces').insert({
				machine_id: m.id,
				version: 1,
				instrument: '1-2-3 block',
				height: 3,
				established_at: new Date(Date.now() - 60 * DAY)
			});
			const [t] = await trx('tools')
				.insert({ machine_id: m.id, t_number: 1, h_number: 1, description: 'end mill' })
				.returning('id');
			const at = new Date(Date.now() - 45 * DAY);
			const [r] = await trx('readings')
				.insert({
					machine_id: m.id,
					kind: 'tool-touch',
					tool_id: t.id,
					machine_z: -15.2,
					block_height: 0,
					reference_version: 1,
					taken_at: at
				})
				.returning('id');
			await trx('offset_versions').insert({
				machine_id: m.id,
				register_kind: 'tool',
				register: '1',
				value: -12.2,
				units: 'inch',
				convention: 'reference-touch',
				reading_id: r.id,
				reference_version: 1,
				created_at: at
			});
		},
		knex
	);
	return {
		id: Number(row.id),
		slug: row.slug,
		name: row.name,
		schemaName: row.schema_name,
		timeZone: row.time_zone
	};
}

async function addMembers(s: ShopRow, tag: string) {
	const out: typeof people = {} as never;
	for (const role of ['owner', 'lead', 'operator'] as const) {
		const email = `${role}-${tag}-${suffix}@faults.example`;
		const [u] = await knex('users').insert({ email, name: role }).returning('id');
		out[role] = { id: Number(u.id), email, name: role };
		await knex('memberships').insert({ user_id: u.id, shop_id: s.id, role });
	}
	return out;
}

/** A form-action / load event as SvelteKit would build it for `user` on the shop's fleet page. */
function fleetEvent(user: { id: number; email: string; name: string }, form?: FormData) {
	const url = new URL(`${config.origin}/shops/${shop.slug}/fleet?/checkNow`);
	return {
		url,
		params: { shop: shop.slug },
		locals: { user },
		request: new Request(url, { method: 'POST', body: form ?? new FormData() }),
		getClientAddress: () => '127.0.0.1'
	} as unknown as RequestEvent as never;
}

beforeAll(async () => {
	shop = await staleShop('Faults Test');
	Object.assign(people, await addMembers(shop, 'f'));
});
afterAll(async () => {
	await closeDb();
	await knex.destroy();
});

describe('Redis down (a proxy in front of the real Redis, closed and reopened)', () => {
	const proxy = new RedisProxy(new URL(config.redisUrl));
	const realRedisUrl = process.env.REDIS_URL;
	let queue: Queue<ShopCheckData, unknown, string>;
	let worker: Worker<ShopCheckData, unknown, string>;

	beforeAll(async () => {
		await proxy.up();
		// The app's own producer (appQueue, used by the page action) is made lazily from
		// REDIS_URL: point it at the proxy before anything uses it.
		process.env.REDIS_URL = proxy.url;
		const connection = producerConnection({}, proxy.url);
		connection.on('error', () => {});
		queue = shopChecksQueue(connection);
		queue.on('error', () => {});
		const workerRedis = new Redis(proxy.url, { maxRetriesPerRequest: null });
		workerRedis.on('error', () => {});
		worker = new Worker<ShopCheckData, unknown, string>(
			SHOP_CHECKS,
			(j) => processShopCheck(j, knex),
			{ connection: workerRedis, prefix: QUEUE_PREFIX }
		);
		worker.on('error', () => {});
		await worker.waitUntilReady();
	});
	afterAll(async () => {
		process.env.REDIS_URL = realRedisUrl;
		await proxy.up();
		await worker.close();
		await queue.close();
		const { appQueue } = await import('$lib/server/queues/shop-checks');
		await appQueue().close();
		for (const q of [queue, appQueue(), worker]) (q.opts.connection as Redis).disconnect();
		await proxy.down();
	});

	it('"Check now" says checks are paused, quickly; the board and the page still answer', async () => {
		await proxy.down();
		const started = Date.now();
		await expect(enqueueCheckNow(shop.id, queue)).rejects.toBeInstanceOf(ChecksPausedError);
		expect(Date.now() - started).toBeLessThan(4000);

		// The page's real action answers 503 with the paused message, not an error page.
		const page = await import('../../src/routes/(app)/shops/[shop]/fleet/+page.server');
		const form = new FormData();
		form.set('scope', 'shop');
		const t0 = Date.now();
		const result = (await page.actions.checkNow(fleetEvent(people.lead, form) as never)) as {
			status: number;
			data: { paused?: string };
		};
		expect(Date.now() - t0).toBeLessThan(4000);
		expect(result.status).toBe(503);
		expect(result.data.paused).toMatch(/^Checks are paused/);

		// The board's data and the fleet page's load need only PostgreSQL.
		const board = await withShop(shop, (trx) => fleetBoard(trx), knex);
		expect(board.machines.map((m) => m.name)).toEqual(['Fault Mill']);
		const loaded = (await page.load(fleetEvent(people.lead))) as {
			board: { machines: unknown[] };
		};
		expect(loaded.board.machines).toHaveLength(1);
	});

	it('when Redis is back, a check enqueued then runs', async () => {
		await proxy.up();
		// ioredis reconnects by itself (backoff up to 2 s); until then the producer still says paused.
		// Normally a second or two; 45 s of margin because a loaded CI machine once took over 20.
		const jobId = await until(
			'the queue to take a job again',
			() => enqueueCheckNow(shop.id, queue),
			45_000
		);
		const run = await until('the worker to run the check', () =>
			withShop(
				shop,
				(trx) => trx('check_runs').where({ job_id: jobId, status: 'done' }).first(),
				knex
			)
		);
		// The first check of this shop: the paused attempts left no job behind that ran instead.
		expect(run).toMatchObject({ trigger: 'manual', machines: 1, opened: 1 });
		const runs = await withShop(shop, (trx) => trx('check_runs').select('job_id'), knex);
		expect(runs.map((r) => r.job_id)).toEqual([jobId]);
		// The app's own producer recovers too: the page action now queues a check.
		const page = await import('../../src/routes/(app)/shops/[shop]/fleet/+page.server');
		const form = new FormData();
		form.set('scope', 'shop');
		const result = await until('the page action to queue', async () => {
			const r = (await page.actions.checkNow(fleetEvent(people.lead, form) as never)) as {
				jobId?: string;
			};
			return r.jobId;
		});
		expect(result).toMatch(new RegExp(`^now-${shop.id}-`));
		await until("the action's check to run", () =>
			withShop(
				shop,
				(trx) => trx('check_runs').where({ job_id: result, status: 'done' }).first(),
				knex
			)
		);
	}, 120_000);
});

describe('SES down (the fake SES starts only after the job has failed)', () => {
	it('the digest is retried with backoff and sent once per member when SES is back', async () => {
		const s = await staleShop('Ses Outage');
		const members = await addMembers(s, 's');
		const port = await freePort();
		const endpointBefore = process.env.SES_ENDPOINT;
		process.env.SES_ENDPOINT = `http://127.0.0.1:${port}`;
		const queue = shopChecksQueue(workerConnection());
		const worker = new Worker<ShopCheckData, unknown, string>(
			SHOP_CHECKS,
			(j) => processShopCheck(j, knex),
			{ connection: workerConnection(), prefix: QUEUE_PREFIX }
		);
		const failures: string[] = [];
		worker.on('failed', (_j, e) => failures.push(e.message));
		let fake: FakeSes | undefined;
		try {
			const job = await queue.add(
				'nightly',
				{ shopId: s.id },
				{ ...jobOptions(200), jobId: `ses-outage-${uniqueSuffix()}` }
			);
			// Two attempts fail while nothing listens (backoff 200 ms, then 400 ms, …).
			await until('two failed attempts', async () => failures.length >= 2, 30_000);
			expect(failures[0]).toMatch(/digest not sent to 2 member\(s\)/);
			expect(await knex('email_log').where('dedupe_key', 'like', `digest:${s.id}:%`)).toEqual([]);
			fake = await startFakeSes({ port });
			const done = await until(
				'the job to complete',
				async () => ((await job.isCompleted()) ? job : undefined),
				30_000
			);
			const finished = (await queue.getJob(done.id!))!;
			expect(finished.attemptsMade).toBeGreaterThanOrEqual(3);
			expect(finished.returnvalue).toMatchObject({ digest: { sent: 2, recipients: 2 } });

			const to = (who: string) => fake!.messages().filter((m) => m.to.includes(who));
			expect(to(members.owner.email)).toHaveLength(1);
			expect(to(members.lead.email)).toHaveLength(1);
			expect(to(members.operator.email)).toHaveLength(0);
			expect(to(members.lead.email)[0].subject).toMatch(/^Ses Outage: 1 finding to look at/);
			const log = await knex('email_log').where('dedupe_key', 'like', `digest:${s.id}:%`);
			expect(log).toHaveLength(2);
			expect(log.every((r) => r.provider_message_id)).toBe(true);

			// Another nightly job the same day (a restart, a duplicate) sends nothing more.
			const again = await queue.add(
				'nightly',
				{ shopId: s.id },
				{ ...jobOptions(200), jobId: `ses-outage-again-${uniqueSuffix()}` }
			);
			await until('the second job', async () => ((await again.isCompleted()) ? true : undefined));
			expect(fake.messages()).toHaveLength(2);
		} finally {
			if (endpointBefore === undefined) delete process.env.SES_ENDPOINT;
			else process.env.SES_ENDPOINT = endpointBefore;
			await worker.close();
			await queue.close();
			await fake?.close();
		}
	}, 60_000);
});

describe('the first check of a never-checked shop (worker start)', () => {
	it("runs as that day's nightly check: the lead gets a digest at once, and only once", async () => {
		const s = await staleShop('First Check');
		const members = await addMembers(s, 'first');
		// A queue of its own: firstChecks queues every never-checked shop in the database, and
		// this test must not run (or mark as queued) other tests' or the demo's shops.
		const prefix = `${QUEUE_PREFIX}-first-${suffix}`;
		const connection = workerConnection();
		const queue = new (await import('bullmq')).Queue<ShopCheckData, unknown, string>(SHOP_CHECKS, {
			connection,
			prefix
		});
		const worker = new Worker<ShopCheckData, unknown, string>(
			SHOP_CHECKS,
			async (j) =>
				j.data.shopId === s.id ? processShopCheck(j, knex) : { skipped: 'not this test' },
			{ connection: workerConnection(), prefix }
		);
		const mails = async (who: string) =>
			(
				(await (
					await fetch(`${config.sesEndpoint}/_fake/messages?to=${encodeURIComponent(who)}`)
				).json()) as { subject: string; text: string }[]
			).filter((m) => m.subject.startsWith('First Check:'));
		try {
			const queued = await firstChecks(queue, knex);
			expect(queued).toContain(s.id);
			const job = (await queue.getJob(`first-${s.id}`))!;
			expect(job.name).toBe('first-check');
			await until('the first check to run', async () =>
				(await job.isCompleted()) ? true : undefined
			);
			const [lead] = await until('the digest', async () => {
				const m = await mails(members.lead.email);
				return m.length > 0 ? m : undefined;
			});
			expect(lead.subject).toMatch(/^First Check: 1 finding to look at/);
			expect(lead.text).toContain('Fault Mill');
			expect(await mails(members.owner.email)).toHaveLength(1);
			expect(await mails(members.operator.email)).toHaveLength(0);
			const run = await withShop(
				s,
				(trx) =>
					trx('check_runs')
						.where({ job_id: `first-${s.id}` })
						.first(),
				knex
			);
			expect(run).toMatchObject({ trigger: 'nightly', status: 'done' });

			// The worker restarts: the shop has been checked, nothing is queued again; and the
			// night's run the same day sends no second digest.
			expect(await firstChecks(queue, knex)).not.toContain(s.id);
			const nightly = await processShopCheck(
				{ id: `night-${suffix}`, name: 'nightly', data: { shopId: s.id }, timestamp: Date.now() },
				knex
			);
			expect('digest' in nightly && nightly.digest).toMatchObject({ sent: 0, alreadySent: 2 });
			expect(await mails(members.lead.email)).toHaveLength(1);
		} finally {
			await worker.close();
			await queue.obliterate({ force: true });
			await queue.close();
		}
	});
});
