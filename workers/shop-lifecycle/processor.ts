import type { Knex } from 'knex';
import { db } from '$lib/server/db';
import type { ShopLifecycleJob } from '$lib/server/queues/shop-lifecycle';
import { purgeShop, shopsDueForPurge } from '$lib/server/shops/deletion';
import { buildExport } from '$lib/server/shops/export';

/** A queued job, or the worker's own repeatable sweep for shops whose grace period is over. */
export type Job = ShopLifecycleJob | { kind: 'sweep' };

/**
 * One shop-lifecycle job: builds an "export everything" archive (reporting progress), or drops
 * a deleted shop's schema and uploads once its grace period is over. Both are idempotent.
 */
export async function processLifecycleJob(
	data: Job,
	progress: (pct: number) => Promise<void>,
	conn: Knex = db()
): Promise<unknown> {
	if (data.kind === 'export') return buildExport(conn, data.exportId, progress);
	if (data.kind === 'purge') return purgeShop(conn, data.shopId);
	const due = await shopsDueForPurge(conn);
	for (const id of due) await purgeShop(conn, id);
	return { purged: due.length };
}
