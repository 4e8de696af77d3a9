import { describe, expect, it, vi } from 'vitest';
import type { ChangeFeed } from './change-feed';
import { catchUp, mustCatchUp, parseWrote, WROTE_COOKIE, wroteCookie } from './read-your-writes';

function feedAt(heardUpTo: number, live = true) {
	const sync = vi.fn(async () => {});
	const feed = { live, heardUpTo, sync } as unknown as ChangeFeed;
	return { feed, sync };
}

describe('read your own writes across nodes', () => {
	it('writes the instant as a short-lived, HttpOnly cookie', () => {
		const c = wroteCookie(1_700_000_000_123.7, false);
		expect(c.startsWith(`${WROTE_COOKIE}=1700000000123;`)).toBe(true);
		expect(c).toContain('HttpOnly');
		expect(c).toContain('Max-Age=30');
		expect(c).not.toContain('Secure');
		expect(wroteCookie(1, true)).toContain('Secure');
	});

	it('ignores missing, malformed, stale and far-future cookies', () => {
		const now = 1_700_000_000_000;
		expect(parseWrote(undefined, now)).toBeUndefined();
		expect(parseWrote('abc', now)).toBeUndefined();
		expect(parseWrote('-5', now)).toBeUndefined();
		expect(parseWrote(String(now - 31_000), now)).toBeUndefined();
		expect(parseWrote(String(now + 120_000), now)).toBeUndefined();
		expect(parseWrote(String(now - 2_000), now)).toBe(now - 2_000);
	});

	it('syncs a feed that has not been heard up to the write (plus the clock skew allowed)', async () => {
		const wroteAt = 1_000_000;
		const behind = feedAt(wroteAt + 50); // within the default 100 ms skew: not enough
		expect(await catchUp(behind.feed, wroteAt)).toBe(true);
		expect(behind.sync).toHaveBeenCalledOnce();

		const ahead = feedAt(wroteAt + 101);
		expect(await catchUp(ahead.feed, wroteAt)).toBe(false);
		expect(ahead.sync).not.toHaveBeenCalled();
	});

	it('does not wait on a feed that is not live (its caches serve nothing then)', () => {
		expect(mustCatchUp(feedAt(0, false).feed, 5)).toBe(false);
	});
});
