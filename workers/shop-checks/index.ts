import { Worker } from 'bullmq';
import type { Knex } from 'knex';
import { db } from '$lib/server/db';
import { workerConnection, QUEUE_PREFIX } from '$lib/server/queues/connection';
import {
	jobOptions,
	SHOP_CHECKS,
	shopChecksQueue,
	syncSchedules,
	type ShopCheckData
} from '$lib/server/queues/shop-checks';
import type { Closable } from '../index';
import { processShopCheck } from './processor';
import { withShop } from '$lib/server/db/tenant';

/** Lock and stalled-job check timing from SHOP_CHECKS_LOCK_MS (BullMQ's defaults when unset). */
function lockOptions(): { lockDuration?: number; stalledInterval?: number } {
	const ms = Number(process.env.SHOP_CHECKS_LOCK_MS);
	if (!Number.isFinite(ms) || ms <= 0) return {};
	return { lockDuration: ms, stalledInterval: Math.max(500, Math.round(ms / 2)) };
}

/** How often the worker re-reads shops to keep one nightly scheduler per shop. */
const SYNC_EVERY_MS = 10 * 60_000;

/**
 * A shop that has never been checked (a new clone, a new shop) gets one check at once rather
 * than waiting for its first night. It runs as `first-check`, which counts as that day's
 * nightly run and sends the digest, so a lead of a fresh demo sees one in /dev/mailbox right
 * away (still at most one per member per day). The fixed job id makes a restart add nothing
 * twice. Returns the shop ids queued.
 */
export async function firstChecks(
	queue: ReturnType<typeof shopChecksQueue>,
	knex: Knex = db()
): Promise<number[]> {
	const shops = await knex('public.shops').whereNotNull('schema_name').select('id', 'schema_name');
	const queued: number[] = [];
	for (const s of shops) {
		// Through withShop: the worker's database role reaches a shop's tables only as that shop.
		const ran = await withShop(
			{ id: Number(s.id), schemaName: s.schema_name },
			async (trx) => (await trx('check_runs').first('id')) !== undefined,
			knex
		);
		if (ran) continue;
		queued.push(Number(s.id));
		await queue.add(
			'first-check',
			{ shopId: Number(s.id) },
			{ ...jobOptions(), jobId: `first-${s.id}` }
		);
	}
	return queued;
}

/**
 * The shop-checks worker: nightly checks and "Check now" jobs, one shop at a time per job,
 * a couple of shops in parallel. Keeps the per-shop schedulers in step with public.shops at
 * start and every ten minutes (a new shop, a changed hour or time zone).
 */

export async function start(): Promise<Closable[]> {
	const queueConnection = workerConnection();
	const queue = shopChecksQueue(queueConnection);
	await syncSchedules(queue, db());
	await firstChecks(queue);
	await queue.upsertJobScheduler(
		'sync-schedules',
		{ every: SYNC_EVERY_MS },
		{ name: 'sync-schedules', opts: { removeOnComplete: 10, removeOnFail: 50 } }
	);

	const worker = new Worker<ShopCheckData, unknown, string>(
		SHOP_CHECKS,
		async (job) => {
			if (job.name === 'sync-schedules') return { shops: await syncSchedules(queue, db()) };
			return processShopCheck(job);
		},
		{
			connection: workerConnection(),
			prefix: QUEUE_PREFIX,
			concurrency: Number(process.env.SHOP_CHECKS_CONCURRENCY ?? 2),
			// Seen on a job as `processedBy`: which of several workers has it (npm run cluster).
			name: process.env.WORKER_NAME || `worker-${process.pid}`,
			// A worker that dies mid-job stops renewing its lock; after lockDuration another worker's
			// stalled-job check takes the job over (idempotent, so the rerun is safe). BullMQ's 30 s
			// default unless SHOP_CHECKS_LOCK_MS says otherwise (the cluster test uses a few seconds).
			...lockOptions()
		}
	);
	worker.on('failed', (job, err) => {
		const attempts = job?.opts.attempts ?? 1;
		console.warn(
			`datumkeep worker: shop-checks job ${job?.id} (shop ${job?.data?.shopId ?? '-'}) failed, attempt ${job?.attemptsMade}/${attempts}: ${err.message}`
		);
	});
	worker.on('error', (err) => console.warn(`datumkeep worker: shop-checks: ${err.message}`));

	return [
		{ name: 'shop-checks worker', close: () => worker.close() },
		{ name: 'shop-checks queue', close: () => queue.close() }
	];
}
