import { Redis } from 'ioredis';
import { config } from './config';

let client: Redis | undefined;

/** The app's shared Redis connection (rate-limit counters; BullMQ producers make their own). */
export function redis(): Redis {
	client ??= new Redis(config.redisUrl, {
		lazyConnect: false,
		maxRetriesPerRequest: 2,
		enableOfflineQueue: true
	});
	return client;
}

export async function closeRedis(): Promise<void> {
	if (client) {
		const c = client;
		client = undefined;
		await c.quit().catch(() => c.disconnect());
	}
}
