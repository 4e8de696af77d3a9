/**
 * Background program checks (issue 6): programs above the inline limits
 * (src/lib/server/programs/file.ts) are stored with a queued check and put on this queue; the
 * processor streams the stored file through the engine and writes progress and the result to
 * the check's row, which the program page polls.
 */
import { Worker } from 'bullmq';
import { PROGRAM_CHECK_QUEUE } from '$lib/server/programs/queue';
import { processProgramCheck, type ProgramCheckJob } from '$lib/server/programs/run';
import { QUEUE_PREFIX, workerConnection } from '$lib/server/queues/connection';
import type { Closable } from '../index';

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
