import { QueueEvents, Worker } from 'bullmq';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { withShop } from '$lib/server/db/tenant';
import { ses } from '$lib/server/email/ses';
import { workerConnection, QUEUE_PREFIX } from '$lib/server/queues/connection';
import {
	jobOptions,
	schedulerId,
	shopChecksQueue,
	syncSchedules,
	SHOP_CHECKS,
	type ShopCheckData,
	type ShopCheckName
} from '$lib/server/queues/shop-checks';
import { provisionShop } from '$lib/server/shops/provision';
import type { ShopInfo } from '$lib/server/shops/queries';
import { processShopCheck } from '../../workers/shop-checks/processor';
import { testDb, uniqueSuffix } from './db';
import { mailsTo } from './mail';

/**
 * The shop-checks queue against the real PostgreSQL, the real Redis (BullMQ cannot run on
 * ioredis-mock) and the fake SES: idempotent findings, automatic resolution, acknowledged
 * findings left alone, one digest per member per day through retries, opt-out, schedulers.
 * Each run provisions its own shop; the queue uses the test's QUEUE_PREFIX and Redis db.
 */
const knex: Knex = testDb();
const DAY = 86_400_000;
let shop: ShopInfo;
let machineId: number;
const people: Record<'owner' | 'lead' | 'operator' | 'quiet', { id: number; email: string }> =
	{} as never;
let jobSeq = 0;

const job = (name: ShopCheckName) => ({
	id: `test-${uniqueSuffix()}-${++jobSeq}`,
	name,
	data: { shopId: shop.id },
	timestamp: Date.now()
});
const findings = () => withShop(shop, (trx) => trx('findings').orderBy('key').select('*'), knex);
const tool = (h: number, value: number, daysAgo: number, referenceVersion: number) =>
	withShop(
		shop,
		async (trx) => {
			const at = new Date(Date.now() - daysAgo * DAY);
			const t = await trx('tools').where({ machine_id: machineId, h_number: h }).first();
			const [r] = await trx('readings')
				.insert({
					machine_id: machineId,
					kind: 'tool-touch',
					tool_id: t.id,
					machine_z: value - 3,
					block_height: 0,
					reference_version: referenceVersion,
					taken_at: at
				})
				.returning('id');
			await trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: String(h),
				value,
				units: 'inch',
				convention: 'reference-touch',
				reading_id: r.id,
				reference_version: referenceVersion,
				created_at: at
			});
		},
		knex
	);

beforeAll(async () => {
	const suffix = uniqueSuffix();
	const created = await provisionShop(knex, {
		name: 'Checks Test',
		slug: `checks-${suffix}`,
		timeZone: 'America/Chicago'
	});
	const row = await knex('shops').where({ id: created.id }).first();
	shop = {
		id: Number(row.id),
		slug: row.slug,
		name: row.name,
		schemaName: row.schema_name,
		timeZone: row.time_zone
	};
	for (const [who, role] of [
		['owner', 'owner'],
		['lead', 'lead'],
		['operator', 'operator'],
		['quiet', 'lead']
	] as const) {
		const email = `${who}-${suffix}@checks.example`;
		const [u] = await knex('users').insert({ email, name: who }).returning('id');
		people[who] = { id: Number(u.id), email };
		await knex('memberships').insert({
			user_id: u.id,
			shop_id: shop.id,
			role,
			digest_opt_out: who === 'quiet'
		});
	}
	await withShop(
		shop,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: 'Check Mill', units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			machineId = Number(m.id);
			await trx('reference_surfaces').insert({
				machine_id: machineId,
				version: 1,
				instrument: '1-2-3 block',
				height: 3,
				established_at: new Date(Date.now() - 60 * DAY)
			});
			await trx('tools').insert([
				{ machine_id: machineId, t_number: 1, h_number: 1, description: 'face mill' },
				{ machine_id: machineId, t_number: 2, h_number: 2, description: 'end mill' }
			]);
		},
		knex
	);
	// H1 measured 10 days ago; H2 45 days ago (past the 30-day tool age: stale-age).
	await tool(1, -12.8421, 10, 1);
	await tool(2, -11.2345, 45, 1);
	// The reference was re-established 2 days ago: H1 and H2 are now stale-reference too.
	await withShop(
		shop,
		(trx) =>
			trx('reference_surfaces').insert({
				machine_id: machineId,
				version: 2,
				instrument: '1-2-3 block',
				height: 3,
				established_at: new Date(Date.now() - 2 * DAY)
			}),
		knex
	);
});
afterAll(async () => {
	vi.restoreAllMocks();
	await knex.destroy();
});

describe('shop checks (real PostgreSQL, Redis and fake SES)', () => {
	it('stores the expected findings, and a second run changes nothing', async () => {
		const first = await processShopCheck(job('check-now'), knex);
		expect(first).toMatchObject({ machines: 1, resolved: 0 });
		const rows = await findings();
		const kinds = rows.map((r) => `${r.kind}|${r.subject}`).sort();
		expect(kinds).toEqual(['stale-age|H2', 'stale-reference|H1', 'stale-reference|H2']);
		expect(rows.every((r) => r.status === 'open' && r.key.startsWith(`m${machineId}|`))).toBe(true);

		const again = await processShopCheck(job('check-now'), knex);
		expect(again).toMatchObject({ opened: 0, stillOpen: 3, resolved: 0 });
		const after = await findings();
		expect(after.map((r) => [r.id, r.key, r.status, r.first_seen_at.toISOString()])).toEqual(
			rows.map((r) => [r.id, r.key, r.status, r.first_seen_at.toISOString()])
		);
		expect(after.every((r, i) => r.last_seen_at >= rows[i].last_seen_at)).toBe(true);
	});

	it('a retried job (same job id) writes exactly the same rows', async () => {
		const j = job('check-now');
		await processShopCheck(j, knex);
		const once = await findings();
		await processShopCheck(j, knex);
		expect(await findings()).toEqual(once);
		const runs = await withShop(shop, (trx) => trx('check_runs').where({ job_id: j.id }), knex);
		expect(runs).toHaveLength(1);
		expect(runs[0].status).toBe('done');
	});

	it('keeps an acknowledged finding acknowledged, and resolves a fixed one by itself', async () => {
		const h2age = (await findings()).find((r) => r.kind === 'stale-age')!;
		await withShop(
			shop,
			(trx) =>
				trx('findings').where({ id: h2age.id }).update({
					status: 'acknowledged',
					acknowledged_by: people.lead.id,
					acknowledged_at: new Date(),
					comment: 'Regrind due Friday'
				}),
			knex
		);
		// H1 touched off again on the new reference: its stale-reference is fixed.
		await tool(1, -12.8424, 0, 2);
		const r = await processShopCheck(job('check-now'), knex);
		expect(r).toMatchObject({ resolved: 1 });
		const rows = await findings();
		const h1 = rows.find((x) => x.kind === 'stale-reference' && x.subject === 'H1')!;
		expect(h1.status).toBe('resolved');
		expect(h1.resolved_by).toBeNull();
		expect(h1.comment).toMatch(/^no longer found by the check at .*America\/Chicago$/);
		const ack = rows.find((x) => x.id === h2age.id)!;
		expect(ack.status).toBe('acknowledged');
		expect(ack.comment).toBe('Regrind due Friday');
		expect(rows.find((x) => x.kind === 'stale-reference' && x.subject === 'H2')!.status).toBe(
			'open'
		);
		expect(rows).toHaveLength(3);
	});

	it('sends one digest per member per day, whatever retries, and none to the opted out', async () => {
		const j = job('nightly');
		const first = await processShopCheck(j, knex);
		expect('digest' in first && first.digest).toMatchObject({ recipients: 2, sent: 2 });
		// The same job again (a retry after a crash) and another nightly job the same day.
		const retry = await processShopCheck(j, knex);
		expect('digest' in retry && retry.digest).toMatchObject({ sent: 0, alreadySent: 2 });
		await processShopCheck(job('nightly'), knex);

		for (const who of ['owner', 'lead'] as const) {
			const mails = await mailsTo(people[who].email);
			expect(mails, who).toHaveLength(1);
			expect(mails[0].subject).toMatch(/^Checks Test: 2 findings to look at/);
			expect(mails[0].text).toContain('Check Mill');
			expect(mails[0].text).toContain(`/shops/${shop.slug}/findings?machine=${machineId}`);
			expect(mails[0].html).toContain('<a href=');
		}
		expect(await mailsTo(people.quiet.email)).toHaveLength(0);
		expect(await mailsTo(people.operator.email)).toHaveLength(0);
		// "Check now" never sends a digest.
		await processShopCheck(job('check-now'), knex);
		expect(await mailsTo(people.owner.email)).toHaveLength(1);
	});

	it('a BullMQ job that fails on SES is retried with backoff and sends once', async () => {
		// A new day for the digest: today's key is taken, so judge "tomorrow" by a fresh shop day.
		await knex('email_log').where('dedupe_key', 'like', `digest:${shop.id}:%`).del();
		const before = (await mailsTo(people.owner.email)).length;
		const connection = workerConnection();
		const queue = shopChecksQueue(connection);
		const events = new QueueEvents(SHOP_CHECKS, {
			connection: workerConnection(),
			prefix: QUEUE_PREFIX
		});
		const send = vi.spyOn(ses(), 'send');
		send.mockRejectedValueOnce(new Error('SES is having a bad day') as never);
		const worker = new Worker<ShopCheckData, unknown, string>(
			SHOP_CHECKS,
			(j) => processShopCheck(j, knex),
			{ connection: workerConnection(), prefix: QUEUE_PREFIX }
		);
		try {
			await events.waitUntilReady();
			const added = await queue.add(
				'nightly',
				{ shopId: shop.id },
				{ ...jobOptions(100), jobId: `retry-${uniqueSuffix()}` }
			);
			const result = (await added.waitUntilFinished(events, 20_000)) as {
				digest: { sent: number; alreadySent: number };
			};
			const done = (await queue.getJob(added.id!))!;
			expect(done.attemptsMade).toBe(2);
			// The first attempt sent to one member and failed on the other; the retry sent the rest.
			expect(result.digest.sent + result.digest.alreadySent).toBe(2);
			expect((await mailsTo(people.owner.email)).length).toBe(before + 1);
			expect(await mailsTo(people.quiet.email)).toHaveLength(0);
		} finally {
			send.mockRestore();
			await worker.close();
			await events.close();
			await queue.close();
		}
	});

	it('registers one nightly scheduler per shop at its own hour and time zone', async () => {
		await knex('shops').where({ id: shop.id }).update({ check_hour: 5 });
		const queue = shopChecksQueue(workerConnection());
		try {
			await syncSchedules(queue, knex);
			const s = await queue.getJobScheduler(schedulerId(shop.id));
			expect(s).toMatchObject({ pattern: '0 5 * * *', tz: 'America/Chicago', name: 'nightly' });
			expect(s?.template?.data).toEqual({ shopId: shop.id });
			// Moving the hour moves the scheduler; there is still one.
			await knex('shops').where({ id: shop.id }).update({ check_hour: 23 });
			await syncSchedules(queue, knex);
			const all = (await queue.getJobSchedulers(0, -1)).filter(
				(x) => x.key === schedulerId(shop.id)
			);
			expect(all).toHaveLength(1);
			expect(all[0].pattern).toBe('0 23 * * *');
			// The next run is 23:00 in Chicago.
			const next = new Date(all[0].next!);
			expect(
				next.toLocaleString('en-GB', {
					timeZone: 'America/Chicago',
					hour: '2-digit',
					minute: '2-digit'
				})
			).toBe('23:00');
		} finally {
			await queue.close();
		}
	});
});
