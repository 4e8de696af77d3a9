/**
 * The `program-check` queue: programs above the inline limits (programs/file.ts) are stored
 * with a queued check and put here; the worker (workers/program-check/) streams the stored file
 * through the engine and writes progress and the result to the check's row, which the program
 * page polls.
 */
import { Queue } from 'bullmq';
import { producerConnection, QUEUE_PREFIX } from './connection';

export const PROGRAM_CHECK_QUEUE = 'program-check';

/** Job data of the program-check queue: ids only. */
export interface ProgramCheckJob {
	shopId: number;
	checkId: number;
}
/** How long the upload waits for Redis before telling the user the queue is out of reach. */
const ENQUEUE_TIMEOUT_MS = 3_000;

let queue: Queue<ProgramCheckJob> | undefined;
let queueRedis: ReturnType<typeof producerConnection> | undefined;

function programQueue(): Queue<ProgramCheckJob> {
	if (!queue) {
		queueRedis = producerConnection();
		queue = new Queue<ProgramCheckJob>(PROGRAM_CHECK_QUEUE, {
			connection: queueRedis,
			prefix: QUEUE_PREFIX
		});
	}
	return queue;
}

/** Closes the program-check producer and its Redis connection (server shutdown). */
export async function closeProgramQueue(): Promise<void> {
	const [q, r] = [queue, queueRedis];
	queue = queueRedis = undefined;
	await q?.close().catch(() => {});
	r?.disconnect();
}

/** Job options: retried with backoff, finished jobs removed (BullMQ guidance). */
export const PROGRAM_CHECK_JOB_OPTIONS = {
	attempts: 3,
	backoff: { type: 'exponential', delay: 2_000 },
	removeOnComplete: 100,
	removeOnFail: 500
} as const;

/**
 * Puts a stored, queued check on the queue (after its transaction committed, so the worker
 * finds the row). Answers false when Redis cannot be reached in time: the check stays queued
 * and the page offers to run it in the request instead.
 */
export async function enqueueProgramCheck(job: ProgramCheckJob): Promise<boolean> {
	let timer: ReturnType<typeof setTimeout> | undefined;
	try {
		await Promise.race([
			programQueue().add('check', job, {
				...PROGRAM_CHECK_JOB_OPTIONS,
				jobId: `shop${job.shopId}-check${job.checkId}`
			}),
			new Promise((_, reject) => {
				timer = setTimeout(() => reject(new Error('timeout')), ENQUEUE_TIMEOUT_MS);
			})
		]);
		return true;
	} catch (e) {
		console.warn(`program check ${job.checkId}: could not queue (${(e as Error).message})`);
		return false;
	} finally {
		clearTimeout(timer);
	}
}
