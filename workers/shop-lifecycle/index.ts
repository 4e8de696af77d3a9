/**
 * Shop lifecycle jobs: the worker of the `shop-lifecycle` queue (producer and job data:
 * src/lib/server/queues/shop-lifecycle.ts; what a job does: ./processor.ts). A repeatable sweep
 * every minute also purges any shop that is due, so a purge job lost with Redis is never missed.
 */
import { Queue, Worker } from 'bullmq';
import { QUEUE_PREFIX, workerConnection } from '$lib/server/queues/connection';
import { LIFECYCLE_JOB_OPTIONS, SHOP_LIFECYCLE_QUEUE } from '$lib/server/queues/shop-lifecycle';
import type { Closable } from '../index';
import { processLifecycleJob, type Job } from './processor';

export async function start(): Promise<Closable[]> {
	const worker = new Worker<Job>(
		SHOP_LIFECYCLE_QUEUE,
		(job) => processLifecycleJob(job.data, (pct) => job.updateProgress(pct)),
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
