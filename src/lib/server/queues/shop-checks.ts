import { Queue, type JobsOptions } from 'bullmq';
import type { Knex } from 'knex';
import type { Redis } from 'ioredis';
import { config } from '../config';
import { producerConnection, QUEUE_PREFIX } from './connection';

/**
 * The `shop-checks` queue: one nightly job scheduler per shop at the shop's own hour
 * in its own time zone, plus "Check now" jobs. Job data is the shop id only (never secrets,
 * never anything the worker should trust over the database). The app produces; the worker
 * (workers/shop-checks) consumes and keeps the schedulers in step with public.shops.
 */
export const SHOP_CHECKS = 'shop-checks';

export interface ShopCheckData {
	shopId: number;
}
/**
 * `first-check` is a never-checked shop's first check at worker start: it counts as that
 * day's nightly run (digest included), so a new shop's leads need not wait for the night.
 */
export type ShopCheckName = 'nightly' | 'first-check' | 'check-now' | 'sync-schedules';

/** Retries with exponential backoff; finished jobs are removed after a while (BullMQ guidance). */
export function jobOptions(backoffMs = config.shopChecks.backoffMs): JobsOptions {
	return {
		attempts: 6,
		backoff: { type: 'exponential', delay: backoffMs },
		removeOnComplete: { age: 7 * 24 * 3600, count: 1000 },
		removeOnFail: { age: 30 * 24 * 3600, count: 5000 }
	};
}

export const schedulerId = (shopId: number) => `nightly-${shopId}`;
export const cronFor = (hour: number) => `0 ${hour} * * *`;

export function shopChecksQueue(connection: Redis): Queue<ShopCheckData, unknown, string> {
	return new Queue<ShopCheckData, unknown, string>(SHOP_CHECKS, {
		connection,
		prefix: QUEUE_PREFIX
	});
}

/** Registers (or moves) a shop's nightly check: `hour`:00 every day in `timeZone`. */
export async function scheduleShop(
	queue: Queue<ShopCheckData, unknown, string>,
	shop: { id: number; checkHour: number; timeZone: string }
): Promise<void> {
	await queue.upsertJobScheduler(
		schedulerId(shop.id),
		{ pattern: cronFor(shop.checkHour), tz: shop.timeZone },
		{ name: 'nightly', data: { shopId: shop.id }, opts: jobOptions() }
	);
}

/**
 * One nightly scheduler per shop that has a schema, none for shops that are gone. Run by the
 * worker at start and every few minutes, so a new shop or a changed hour is picked up even if
 * the app could not reach Redis when it changed.
 */
export async function syncSchedules(
	queue: Queue<ShopCheckData, unknown, string>,
	knex: Knex
): Promise<number> {
	const shops = await knex('public.shops')
		.whereNotNull('schema_name')
		.select('id', 'check_hour', 'time_zone');
	const wanted = new Set<string>();
	for (const s of shops) {
		const id = Number(s.id);
		wanted.add(schedulerId(id));
		const current = await queue.getJobScheduler(schedulerId(id));
		if (current?.pattern === cronFor(s.check_hour) && current?.tz === s.time_zone) continue;
		await scheduleShop(queue, { id, checkHour: s.check_hour, timeZone: s.time_zone });
	}
	for (const s of await queue.getJobSchedulers(0, -1)) {
		if (s.key.startsWith('nightly-') && !wanted.has(s.key)) await queue.removeJobScheduler(s.key);
	}
	return shops.length;
}

let producer: Queue<ShopCheckData, unknown, string> | undefined;
let producerRedis: ReturnType<typeof producerConnection> | undefined;

/**
 * The app's producer: fails fast when Redis is down (no offline queue), so "Check now" can say
 * checks are paused instead of hanging the request.
 */
export function appQueue(): Queue<ShopCheckData, unknown, string> {
	if (!producer) {
		const connection = producerConnection();
		// Outages are reported to the user by the action; ioredis would otherwise log each retry.
		connection.on('error', () => {});
		producerRedis = connection;
		producer = shopChecksQueue(connection);
		producer.on('error', () => {});
	}
	return producer;
}

/** Closes the app's producer and its Redis connection (server shutdown). */
export async function closeAppQueue(): Promise<void> {
	const [q, r] = [producer, producerRedis];
	producer = producerRedis = undefined;
	await q?.close().catch(() => {});
	r?.disconnect();
}

export class ChecksPausedError extends Error {
	constructor() {
		super(
			'Checks are paused: the job queue cannot be reached right now. The nightly check will run when it is back.'
		);
	}
}

async function withTimeout<T>(p: Promise<T>, ms = 3000): Promise<T> {
	let timer: ReturnType<typeof setTimeout> | undefined;
	try {
		return await Promise.race([
			p,
			new Promise<never>((_, reject) => {
				timer = setTimeout(() => reject(new Error('queue timeout')), ms);
			})
		]);
	} finally {
		clearTimeout(timer);
	}
}

/** Whether the connection is (or within `ms` becomes) ready; false while Redis is away. */
async function connected(connection: unknown, ms = 1500): Promise<boolean> {
	const c = connection as Partial<Redis>;
	if (typeof c?.status !== 'string' || typeof c.once !== 'function') return true;
	if (c.status === 'ready') return true;
	return new Promise((resolve) => {
		const onReady = () => {
			clearTimeout(timer);
			resolve(true);
		};
		const timer = setTimeout(() => {
			c.off?.('ready', onReady);
			resolve(false);
		}, ms);
		c.once!('ready', onReady);
	});
}

/**
 * Enqueues a check of the shop now; returns the job id to follow. Throws ChecksPausedError
 * within a couple of seconds when Redis cannot be reached (`queue` is for tests). Nothing is
 * handed to BullMQ while the connection is down: an add waiting for Redis would otherwise be
 * sent when it returns, running a check the user was told is paused.
 */
export async function enqueueCheckNow(
	shopId: number,
	queue: Queue<ShopCheckData, unknown, string> = appQueue()
): Promise<string> {
	if (!(await connected(queue.opts.connection))) throw new ChecksPausedError();
	try {
		const job = await withTimeout(
			queue.add('check-now', { shopId }, { ...jobOptions(), jobId: `now-${shopId}-${Date.now()}` })
		);
		return job.id!;
	} catch {
		throw new ChecksPausedError();
	}
}

/** Moves the shop's nightly check to a new hour (the worker's sync would also catch it). */
export async function rescheduleShop(shop: {
	id: number;
	checkHour: number;
	timeZone: string;
}): Promise<boolean> {
	try {
		await withTimeout(scheduleShop(appQueue(), shop));
		return true;
	} catch {
		return false;
	}
}

/** A running job's progress (machines done of total), or null when Redis cannot say. */
export async function jobProgress(
	jobId: string,
	shopId: number
): Promise<{ done: number; total: number } | null> {
	try {
		const job = await withTimeout(appQueue().getJob(jobId), 1500);
		if (!job || job.data.shopId !== shopId) return null;
		const p = job.progress as { done?: number; total?: number } | number;
		return typeof p === 'object' && p && typeof p.done === 'number'
			? { done: p.done, total: p.total ?? 0 }
			: null;
	} catch {
		return null;
	}
}
