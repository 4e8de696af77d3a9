import { Redis, type RedisOptions } from 'ioredis';
import { config } from '../config';

/**
 * Redis connections for BullMQ. Workers need `maxRetriesPerRequest: null` (BullMQ blocks on
 * Redis and must not give up); producers in the web app fail fast instead, so a Redis outage
 * gives the user an error rather than a hung request.
 */
export function workerConnection(): Redis {
	return new Redis(config.redisUrl, { maxRetriesPerRequest: null });
}

export function producerConnection(extra: RedisOptions = {}, url = config.redisUrl): Redis {
	return new Redis(url, {
		maxRetriesPerRequest: 1,
		enableOfflineQueue: false,
		...extra
	});
}

/** Queue names, one per folder under workers/. Job data carries ids only, never secrets. */
export const QUEUE_PREFIX = config.queuePrefix;
