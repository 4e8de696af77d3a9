import { Worker } from 'bullmq';
import { db } from '$lib/server/db';
import { workerConnection, QUEUE_PREFIX } from '$lib/server/queues/connection';
import {
	SHOP_CHECKS,
	shopChecksQueue,
	syncSchedules,
	type ShopCheckData,
	type ShopCheckName
} from '$lib/server/queues/shop-checks';
import type { Closable } from '../index';
import { processShopCheck } from './processor';

/** How often the worker re-reads shops to keep one nightly scheduler per shop. */
const SYNC_EVERY_MS = 10 * 60_000;

/**
 * The shop-checks worker: nightly checks and "Check now" jobs, one shop at a time per job,
 * a couple of shops in parallel. Keeps the per-shop schedulers in step with public.shops at
 * start and every ten minutes (a new shop, a changed hour or time zone).
 */
export async function start(): Promise<Closable[]> {
	const queueConnection = workerConnection();
	const queue = shopChecksQueue(queueConnection);
	await syncSchedules(queue, db());
	await queue.upsertJobScheduler(
		'sync-schedules',
		{ every: SYNC_EVERY_MS },
		{ name: 'sync-schedules', opts: { removeOnComplete: 10, removeOnFail: 50 } }
	);

	const worker = new Worker<ShopCheckData, unknown, ShopCheckName>(
		SHOP_CHECKS,
		async (job) => {
			if (job.name === 'sync-schedules') return { shops: await syncSchedules(queue, db()) };
			return processShopCheck(job);
		},
		{
			connection: workerConnection(),
			prefix: QUEUE_PREFIX,
			concurrency: Number(process.env.SHOP_CHECKS_CONCURRENCY ?? 2)
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
