import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { can, type Capability, type Role } from '$lib/permissions';
import { db } from './db';
import { changeFeed, perProcess } from './db/change-feed';
import { SHOP_MOVING_MESSAGE } from './db/servers';
import { createMembershipCache, membershipKey } from './shops/membership-cache';
import { formerMembership } from './shops/lifecycle';
import { findMembership, type ShopInfo } from './shops/queries';

export interface Member {
	user: { id: number; email: string; name: string };
	shop: ShopInfo;
	role: Role;
}

const isApi = (event: RequestEvent) => event.url.pathname.startsWith('/api/');

/** The signed-in user, or a redirect to sign-in (pages) / 401 (API). */
export function requireUser(event: RequestEvent): NonNullable<App.Locals['user']> {
	const user = event.locals.user;
	if (!user) {
		if (isApi(event)) error(401, 'Sign in first.');
		redirect(303, `/signin?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
	}
	return user;
}

/** GET and HEAD only read; anything else may write (form actions, POST/PUT/PATCH/DELETE). */
export const onlyReads = (method: string) => method === 'GET' || method === 'HEAD';

const membershipCache = () => perProcess('memberships', () => createMembershipCache(changeFeed()));

/**
 * The membership behind a request. Reads (GET, HEAD) may use the membership cache, which every
 * committed change to memberships or shops empties ($lib/server/shops/membership-cache.ts);
 * anything that can write (form actions, POST/PUT/PATCH/DELETE) reads the database.
 */
async function membershipFor(event: RequestEvent, userId: number, slug: string) {
	if (!onlyReads(event.request.method)) return findMembership(db(), userId, slug);
	const memberships = membershipCache();
	const key = membershipKey(userId, slug);
	const cached = memberships.get(key);
	if (cached) return cached;
	const version = memberships.version;
	const found = await findMembership(db(), userId, slug);
	// Only memberships are kept: "not a member" of any slug a user cares to type would let one
	// person crowd everyone else out of the cache.
	if (found) memberships.set(key, found, version);
	return found;
}

/**
 * The one guard for shop data: every load, form action and API route under a shop calls it.
 * Not a member (or no such shop) → 404, so a shop's existence is not revealed; a member whose
 * role lacks the capability → 403.
 */
export async function requireMember(
	event: RequestEvent,
	capability: Capability = 'shop.read'
): Promise<Member> {
	const user = requireUser(event);
	const slug = event.params.shop;
	if (!slug) error(404, 'Not found');
	const membership = await membershipFor(event, user.id, slug);
	if (!membership) {
		// Someone removed from the shop (or whose shop was deleted) is told so on a page of its
		// own rather than a bare "not found"; everyone else still learns nothing
		// (no hint that a shop with this slug exists).
		if (!isApi(event) && (await formerMembership(db(), user.id, slug))) {
			redirect(303, `/access-ended/${encodeURIComponent(slug)}`);
		}
		error(404, 'Not found');
	}
	if (!can(membership.role, capability)) {
		error(403, 'Your role in this shop does not allow this.');
	}
	// A shop waiting out its deletion grace period is read-only; only its owner may act, to
	// restore it (the guard answers 423 to anyone else's writes).
	if (
		membership.shop.deletionPurgeAfter &&
		!onlyReads(event.request.method) &&
		capability !== 'shop.delete'
	) {
		error(
			423,
			'This shop is set to be deleted and is read-only. Its owner can restore it on the Settings page.'
		);
	}
	// A shop being moved to another database server (npm run shop:move) is read-only for a few
	// minutes. Writes read the membership from the database, so this holds from the moment the
	// move starts, on every node; the shop's role has lost its write grants besides (withShop).
	if (membership.shop.movingTo && !onlyReads(event.request.method)) {
		error(503, SHOP_MOVING_MESSAGE);
	}
	return { user, shop: { ...membership.shop }, role: membership.role };
}
