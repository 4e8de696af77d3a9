import { Worker } from 'bullmq';
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

/** How often the worker re-reads shops to keep one nightly scheduler per shop. */
const SYNC_EVERY_MS = 10 * 60_000;

/**
 * The shop-checks worker: nightly checks and "Check now" jobs, one shop at a time per job,
 * a couple of shops in parallel. Keeps the per-shop schedulers in step with public.shops at
 * start and every ten minutes (a new shop, a changed hour or time zone).
 */
/**
 * A shop that has never been checked (a new clone, a new shop) gets one check at once rather
 * than waiting for its first night. The fixed job id makes a restart add nothing twice.
 */
async function firstChecks(queue: ReturnType<typeof shopChecksQueue>) {
	const shops = await db()('public.shops').whereNotNull('schema_name').select('id', 'schema_name');
	for (const s of shops) {
		const { rows } = await db().raw('select exists (select 1 from ??.check_runs) as ran', [
			s.schema_name
		]);
		if (!rows[0].ran)
			await queue.add(
				'check-now',
				{ shopId: Number(s.id) },
				{ ...jobOptions(), jobId: `first-${s.id}` }
			);
	}
}

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
