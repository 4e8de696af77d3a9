import type { ChangeFeed } from '../db/change-feed';
import { createFeedCache, type FeedCache } from '../db/feed-cache';
import type { MembershipView } from './queries';

export const membershipKey = (userId: number, slug: string) => `${userId}\u0000${slug}`;

/**
 * Who belongs to which shop with which role, for the guard's reads. Every change to
 * public.memberships or public.shops announces itself on commit (`memberships`, from the
 * triggers in migrations/public/…_create_change_notifications) and empties this cache, so a
 * removal or a role change holds from the next request the notification reaches; entries live
 * at most 30 s besides. Form actions and other writes never use it: they read the membership
 * from the database (src/lib/server/guard.ts).
 */
export function createMembershipCache(feed: ChangeFeed, ttlMs = 30_000): FeedCache<MembershipView> {
	return createFeedCache<MembershipView>({
		feed,
		ttlMs,
		drops: (payload) => (payload === 'memberships' ? 'all' : null)
	});
}
