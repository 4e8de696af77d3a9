import { closeDb } from './db';
import { stopChangeFeed } from './db/change-feed';
import { closeServers } from './db/servers';
import { closeProgramQueue } from './queues/program-check';
import { closeAppQueue } from './queues/shop-checks';
import { closeLifecycleQueue } from './queues/shop-lifecycle';
import { closeRedis } from './redis';

/**
 * Closes every connection the web server opened (change feed, job queues, Redis, the
 * PostgreSQL pool). adapter-node's graceful shutdown (SIGTERM/SIGINT) stops taking requests,
 * lets the running ones finish, then waits for the event loop to empty — which these open
 * connections would otherwise prevent. A process that still has not ended 5 s later (a
 * library's stray handle) exits anyway.
 */
export async function closeServerResources(): Promise<void> {
	const results = await Promise.allSettled([
		stopChangeFeed(),
		closeAppQueue(),
		closeProgramQueue(),
		closeLifecycleQueue(),
		closeRedis()
	]);
	await closeServers().catch(() => {});
	await closeDb().catch(() => {});
	for (const r of results) if (r.status === 'rejected') console.error('shutdown:', r.reason);
	setTimeout(() => process.exit(0), 5_000).unref();
}
