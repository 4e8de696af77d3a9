/**
 * Background program checks: the worker of the `program-check` queue (producer and job data:
 * src/lib/server/queues/program-check.ts; what a job does: ./processor.ts).
 */
import { Worker } from 'bullmq';
import { QUEUE_PREFIX, workerConnection } from '$lib/server/queues/connection';
import { PROGRAM_CHECK_QUEUE, type ProgramCheckJob } from '$lib/server/queues/program-check';
import type { Closable } from '../index';
import { processProgramCheck } from './processor';

export async function start(): Promise<Closable> {
	const worker = new Worker<ProgramCheckJob>(
		PROGRAM_CHECK_QUEUE,
		async (job) => {
			const outcome = await processProgramCheck(job.data);
			return { status: outcome.status };
		},
		{ connection: workerConnection(), prefix: QUEUE_PREFIX, concurrency: 2 }
	);
	worker.on('failed', (job, err) =>
		console.error(`program-check: job ${job?.id ?? '?'} failed: ${err.message}`)
	);
	await worker.waitUntilReady();
	return { name: PROGRAM_CHECK_QUEUE, close: () => worker.close() };
}
