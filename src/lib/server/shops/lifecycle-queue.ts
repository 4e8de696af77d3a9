/**
 * The `shop-lifecycle` queue (worker: workers/shop-lifecycle/): building "export everything"
 * archives and dropping a deleted shop's data once its grace period is over. Jobs carry ids only.
 */
import { Queue } from 'bullmq';
import { producerConnection, QUEUE_PREFIX } from '../queues/connection';

export const SHOP_LIFECYCLE_QUEUE = 'shop-lifecycle';

export type ShopLifecycleJob =
	{ kind: 'export'; exportId: number } | { kind: 'purge'; shopId: number };

const ENQUEUE_TIMEOUT_MS = 3_000;

export const LIFECYCLE_JOB_OPTIONS = {
	attempts: 5,
	backoff: { type: 'exponential', delay: 2_000 },
	removeOnComplete: 100,
	removeOnFail: 500
} as const;

let queue: Queue<ShopLifecycleJob> | undefined;
let queueRedis: ReturnType<typeof producerConnection> | undefined;

function lifecycleQueue(): Queue<ShopLifecycleJob> {
	if (!queue) {
		queueRedis = producerConnection();
		queue = new Queue<ShopLifecycleJob>(SHOP_LIFECYCLE_QUEUE, {
			connection: queueRedis,
			prefix: QUEUE_PREFIX
		});
	}
	return queue;
}

export async function closeLifecycleQueue(): Promise<void> {
	const [q, r] = [queue, queueRedis];
	queue = queueRedis = undefined;
	await q?.close().catch(() => {});
	r?.disconnect();
}

/**
 * Queues a job (after its row committed). `delayMs` holds a purge until the grace period ends.
 * False when Redis cannot be reached in time: the row stays as it is and the worker's sweep
 * (every minute) picks it up.
 */
export async function enqueueLifecycle(job: ShopLifecycleJob, delayMs = 0): Promise<boolean> {
	let timer: ReturnType<typeof setTimeout> | undefined;
	const jobId =
		job.kind === 'export' ? `export-${job.exportId}` : `purge-${job.shopId}-${Date.now()}`;
	try {
		await Promise.race([
			lifecycleQueue().add(job.kind, job, {
				...LIFECYCLE_JOB_OPTIONS,
				jobId,
				delay: Math.max(0, delayMs)
			}),
			new Promise((_, reject) => {
				timer = setTimeout(() => reject(new Error('timeout')), ENQUEUE_TIMEOUT_MS);
			})
		]);
		return true;
	} catch (e) {
		console.warn(`shop-lifecycle ${jobId}: could not queue (${(e as Error).message})`);
		return false;
	} finally {
		clearTimeout(timer);
	}
}
