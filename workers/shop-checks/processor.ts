import type { Job } from 'bullmq';
import type { Knex } from 'knex';
import { db } from '$lib/server/db';
import { shopIsMoving, SHOP_MOVING_MESSAGE } from '$lib/server/db/servers';
import { markCheckFailed, runShopCheck, type CheckSummary } from '$lib/server/fleet/check';
import { sendDigests, type DigestResult } from '$lib/server/fleet/digest';
import type { ShopCheckData } from '$lib/server/queues/shop-checks';
import type { ShopInfo } from '$lib/server/shops/queries';

export interface ShopCheckResult extends CheckSummary {
	shopId: number;
	digest: DigestResult | null;
}

async function loadShop(knex: Knex, shopId: number) {
	const s = await knex('public.shops')
		.where({ id: shopId })
		.first('id', 'slug', 'name', 'schema_name', 'time_zone');
	if (!s || !s.schema_name) return undefined;
	const shop: ShopInfo = {
		id: Number(s.id),
		slug: s.slug,
		name: s.name,
		schemaName: s.schema_name,
		timeZone: s.time_zone
	};
	return shop;
}

/**
 * One job of the shop-checks queue: check every machine of the shop, then (nightly and a
 * shop's first check only) the digest. Safe to run again for the same job — the check is idempotent and the digest is at
 * most one per member per day (see runShopCheck and sendDigests). Throws to let BullMQ retry.
 */
export async function processShopCheck(
	job: Pick<Job<ShopCheckData, unknown, string>, 'id' | 'name' | 'data' | 'timestamp'> & {
		updateProgress?: Job['updateProgress'];
	},
	knex: Knex = db()
): Promise<ShopCheckResult | { skipped: string }> {
	const shop = await loadShop(knex, Number(job.data.shopId));
	if (!shop) return { skipped: 'no such shop' };
	// A shop being moved to another database server is read-only for a few minutes: fail
	// with a plain reason and let BullMQ's backoff try again once the move is over.
	if (await shopIsMoving(knex, shop.id)) throw new Error(SHOP_MOVING_MESSAGE);
	const jobId = String(job.id);
	// A shop's first check at worker start stands in for that day's nightly run (digest too).
	const trigger = job.name === 'nightly' || job.name === 'first-check' ? 'nightly' : 'manual';
	try {
		const summary = await runShopCheck(
			shop,
			{
				jobId,
				trigger,
				onProgress: (done, total) => job.updateProgress?.({ done, total })
			},
			knex
		);
		const digest =
			trigger === 'nightly' ? await sendDigests(shop, new Date(summary.checkedAt), knex) : null;
		return { shopId: shop.id, ...summary, digest };
	} catch (e) {
		await markCheckFailed(shop, jobId, (e as Error).message, knex).catch(() => {});
		throw e;
	}
}
