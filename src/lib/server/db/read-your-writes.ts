import type { ChangeFeed } from './change-feed';

/**
 * Read your own writes across app nodes (issue 19). Each node's caches hear a change when its
 * PostgreSQL notification arrives — normally within milliseconds, but a node whose feed is
 * behind could answer a user's next request from a cache that predates their own write.
 *
 * So a response to a request that may have written carries a cookie with the instant it was
 * answered (after the commit). A node that gets a request with that cookie and has not heard
 * its feed up to that instant first sends a marker round its feed (`sync()`): PostgreSQL
 * delivers notifications in commit order, and the marker is sent after the request arrived —
 * which is after the write committed — so once it is back every notification of the write has
 * reached this node's caches. If the marker does not come back, the feed counts as lost and the
 * caches serve nothing (they read the database), which is also correct.
 *
 * Nodes compare instants from different clocks only to decide whether they may skip the
 * round trip; `CLOCK_SKEW_MS` (default 100) is the skew allowed for.
 */
export const WROTE_COOKIE = 'dk_wrote';

/** How long the cookie matters: a feed that is this far behind is caught by its heartbeat. */
export const WROTE_TTL_S = 30;

const clockSkewMs = () => {
	const v = Number(process.env.CLOCK_SKEW_MS);
	return Number.isFinite(v) && v >= 0 ? v : 100;
};

/** The Set-Cookie value for a write answered at `at` (ms since the epoch). */
export function wroteCookie(at: number, secure: boolean): string {
	const attrs = [`${WROTE_COOKIE}=${Math.floor(at)}`, 'Path=/', `Max-Age=${WROTE_TTL_S}`];
	attrs.push('HttpOnly', 'SameSite=Lax');
	if (secure) attrs.push('Secure');
	return attrs.join('; ');
}

/** The instant in a request's cookie, or undefined when absent, malformed or implausible. */
export function parseWrote(value: string | undefined, now = Date.now()): number | undefined {
	if (!value || !/^\d{1,16}$/.test(value)) return undefined;
	const at = Number(value);
	// Older than the cookie's life, or further ahead than any sane clock skew: ignore.
	if (at < now - WROTE_TTL_S * 1000 || at > now + 60_000) return undefined;
	return at;
}

/** Whether `feed` must catch up before serving a request whose user wrote at `wroteAt`. */
export function mustCatchUp(feed: Pick<ChangeFeed, 'live' | 'heardUpTo'>, wroteAt: number) {
	// A feed that is not live serves nothing from cache: nothing to wait for.
	return feed.live && feed.heardUpTo < wroteAt + clockSkewMs();
}

/** Waits until `feed` has heard every change committed before `wroteAt`; true when it synced. */
export async function catchUp(feed: ChangeFeed, wroteAt: number): Promise<boolean> {
	if (!mustCatchUp(feed, wroteAt)) return false;
	await feed.sync();
	return true;
}
