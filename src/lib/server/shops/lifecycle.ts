/**
 * The public lifecycle log (issue 18): what happened to a shop as a whole or to someone's access
 * to it — member removed, ownership handed over, deletion asked, restored, data dropped, export.
 * Kept in `public` because a dropped shop's own audit log goes with its schema.
 */
import type { Knex } from 'knex';

export interface LifecycleEntry {
	shopId: number;
	shopSlug: string;
	action: string;
	actorUserId?: number | null;
	actorEmail?: string;
	detail?: Record<string, unknown>;
}

export async function logLifecycle(
	conn: Knex | Knex.Transaction,
	e: LifecycleEntry
): Promise<void> {
	await conn('public.shop_lifecycle_log').insert({
		shop_id: e.shopId,
		shop_slug: e.shopSlug,
		action: e.action,
		actor_user_id: e.actorUserId ?? null,
		actor_email: e.actorEmail ?? '',
		detail: JSON.stringify(e.detail ?? {})
	});
}

/**
 * The newest removal of this person from the shop with this slug, when they are not a member
 * again since: the guard sends them to a page that says so instead of a bare "not found".
 */
export async function formerMembership(
	conn: Knex | Knex.Transaction,
	userId: number,
	slug: string
): Promise<{ shopName: string; removedAt: Date; reason: string } | undefined> {
	const row = await conn('public.shop_lifecycle_log as l')
		.join('public.shops as s', 's.id', 'l.shop_id')
		.where('l.shop_slug', slug)
		.whereIn('l.action', ['member.removed', 'shop.purged'])
		.whereRaw(`(l.detail->>'userId')::bigint = ? or l.action = 'shop.purged'`, [userId])
		.orderBy('l.id', 'desc')
		.first('s.name', 'l.at', 'l.action', 's.id');
	if (!row) return undefined;
	if (row.action === 'shop.purged') {
		// Only people who belonged to it are told it was deleted.
		const was = await conn('public.shop_lifecycle_log')
			.where({ shop_id: row.id, action: 'shop.purged' })
			.whereRaw(`detail->'memberUserIds' @> to_jsonb(?::bigint)`, [userId])
			.first('id');
		if (!was) return undefined;
	}
	return {
		shopName: row.name,
		removedAt: new Date(row.at),
		reason: row.action === 'shop.purged' ? 'deleted' : 'removed'
	};
}
