import { createHash } from 'node:crypto';
import type { ChangeFeed } from '../db/change-feed';
import { createFeedCache, type FeedCache } from '../db/feed-cache';

export interface SignedInUser {
	id: number;
	email: string;
	name: string;
}

/**
 * The session cookie's value(s) as one key: a SHA-256, so the cache never holds a usable
 * token. Auth.js names the cookie `authjs.session-token` (`__Secure-` prefixed on https) and
 * splits a large one into `.0`, `.1`, …. Null when there is no session cookie.
 */
export function sessionKey(cookies: { name: string; value: string }[]): string | null {
	const parts = cookies
		.filter((c) => /^(__Secure-)?authjs\.session-token(\.\d+)?$/.test(c.name) && c.value)
		.sort((a, b) => a.name.localeCompare(b.name, 'en'))
		.map((c) => `${c.name}=${c.value}`);
	if (parts.length === 0) return null;
	return createHash('sha256').update(parts.join('\n')).digest('base64url');
}

/**
 * Signed-in users by session cookie, for a minute. Decrypting Auth.js's session cookie costs
 * a key derivation and a decryption per request (about 2.5 ms of CPU, most of a cheap
 * request); re-using the answer for the same cookie for a minute removes it.
 *
 * Safe because: the key is a hash of the whole cookie, so only the holder of that exact token
 * gets the entry; an entry lives at most a minute (a token accepted in the last minute is
 * accepted for the rest of that minute — JWT sessions cannot be revoked earlier anyway); a
 * change to the user's row (`user:<id>` from the users trigger) drops their entries at once;
 * nothing is served while the change feed is not live. Shop access has its own cache
 * ($lib/server/shops/membership-cache.ts).
 */
export function createSessionCache(feed: ChangeFeed, ttlMs = 60_000): FeedCache<SignedInUser> {
	return createFeedCache<SignedInUser>({
		feed,
		ttlMs,
		drops: (payload) => {
			if (payload === 'users') return 'all';
			if (!payload.startsWith('user:')) return null;
			const id = Number(payload.slice('user:'.length));
			return (_key, user) => user.id === id;
		}
	});
}
