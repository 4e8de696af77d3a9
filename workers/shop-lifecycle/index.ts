/**
 * Shop lifecycle jobs (issue 18): "export everything" archives with progress, and dropping a
 * deleted shop's schema and uploads once its grace period is over. A repeatable sweep every
 * minute also purges any shop that is due, so a purge job lost with Redis is never missed.
 */
import { Queue, Worker } from 'bullmq';
import { db } from '$lib/server/db';
import { QUEUE_PREFIX, workerConnection } from '$lib/server/queues/connection';
import { purgeShop, shopsDueForPurge } from '$lib/server/shops/deletion';
import { buildExport } from '$lib/server/shops/export';
import {
	LIFECYCLE_JOB_OPTIONS,
	SHOP_LIFECYCLE_QUEUE,
	type ShopLifecycleJob
} from '$lib/server/shops/lifecycle-queue';
import type { Closable } from '../index';

type Job = ShopLifecycleJob | { kind: 'sweep' };

export async function start(): Promise<Closable[]> {
	const worker = new Worker<Job>(
		SHOP_LIFECYCLE_QUEUE,
		async (job) => {
			const data = job.data;
			if (data.kind === 'export') {
				return buildExport(db(), data.exportId, (pct) => job.updateProgress(pct));
			}
			if (data.kind === 'purge') return purgeShop(db(), data.shopId);
			const due = await shopsDueForPurge(db());
			for (const id of due) await purgeShop(db(), id);
			return { purged: due.length };
		},
		{ connection: workerConnection(), prefix: QUEUE_PREFIX, concurrency: 1 }
	);
	worker.on('failed', (job, err) =>
		console.error(`shop-lifecycle: job ${job?.id ?? '?'} failed: ${err.message}`)
	);
	const queueRedis = workerConnection();
	const queue = new Queue<Job>(SHOP_LIFECYCLE_QUEUE, {
		connection: queueRedis,
		prefix: QUEUE_PREFIX
	});
	await queue.upsertJobScheduler(
		'purge-sweep',
		{ every: 60_000 },
		{ name: 'sweep', data: { kind: 'sweep' }, opts: LIFECYCLE_JOB_OPTIONS }
	);
	await worker.waitUntilReady();
	return [
		{ name: SHOP_LIFECYCLE_QUEUE, close: () => worker.close() },
		{
			name: `${SHOP_LIFECYCLE_QUEUE} scheduler`,
			close: async () => {
				await queue.close();
				queueRedis.disconnect();
			}
		}
	];
}
