import { describe, expect, it, vi } from 'vitest';
import { manualChangeFeed } from '../db/change-feed.fake';
import { createSessionCache, sessionKey } from './session-cache';

describe('sessionKey', () => {
	it('is a hash of the session cookie, never the token itself', () => {
		const key = sessionKey([{ name: 'authjs.session-token', value: 'eyJhbGciOiJkaXIi.secret' }]);
		expect(key).toMatch(/^[A-Za-z0-9_-]{43}$/);
		expect(key).not.toContain('secret');
	});

	it('differs for different tokens and ignores other cookies', () => {
		const a = sessionKey([{ name: 'authjs.session-token', value: 'token-a' }]);
		const b = sessionKey([{ name: 'authjs.session-token', value: 'token-b' }]);
		const aWithOthers = sessionKey([
			{ name: 'theme', value: 'dark' },
			{ name: 'authjs.session-token', value: 'token-a' },
			{ name: 'authjs.csrf-token', value: 'x' }
		]);
		expect(a).not.toBe(b);
		expect(aWithOthers).toBe(a);
	});

	it('covers the secure name and every chunk of a split cookie, in any order', () => {
		const split = sessionKey([
			{ name: '__Secure-authjs.session-token.1', value: 'second' },
			{ name: '__Secure-authjs.session-token.0', value: 'first' }
		]);
		const swapped = sessionKey([
			{ name: '__Secure-authjs.session-token.0', value: 'first' },
			{ name: '__Secure-authjs.session-token.1', value: 'second' }
		]);
		const onlyFirst = sessionKey([{ name: '__Secure-authjs.session-token.0', value: 'first' }]);
		expect(split).toBe(swapped);
		expect(split).not.toBe(onlyFirst);
	});

	it('is null without a session cookie or with an emptied one (signed out)', () => {
		expect(sessionKey([])).toBeNull();
		expect(sessionKey([{ name: 'authjs.session-token', value: '' }])).toBeNull();
		expect(sessionKey([{ name: 'session-token', value: 'x' }])).toBeNull();
	});
});

describe('createSessionCache', () => {
	it("drops a user's sessions when their row changes, and only theirs", () => {
		const feed = manualChangeFeed();
		const cache = createSessionCache(feed);
		const ada = { id: 1, email: 'a@x.example', name: 'A' };
		const bo = { id: 2, email: 'b@x.example', name: 'B' };
		cache.set('k1', ada, cache.version);
		cache.set('k2', ada, cache.version);
		cache.set('k3', bo, cache.version);
		feed.change('user:1');
		expect(cache.get('k1')).toBeUndefined();
		expect(cache.get('k2')).toBeUndefined();
		expect(cache.get('k3')).toEqual(bo);
		feed.change('board:shop_1'); // not about users
		expect(cache.get('k3')).toEqual(bo);
		feed.change('users'); // the users table was truncated
		expect(cache.get('k3')).toBeUndefined();
	});

	it('forgets a session after a minute', () => {
		vi.useFakeTimers({ now: 0 });
		try {
			const feed = manualChangeFeed();
			const cache = createSessionCache(feed);
			const user = { id: 3, email: 'c@x.example', name: 'C' };
			cache.set('k', user, cache.version);
			vi.setSystemTime(59_999);
			expect(cache.get('k')).toEqual(user);
			vi.setSystemTime(60_000);
			expect(cache.get('k')).toBeUndefined();
		} finally {
			vi.useRealTimers();
		}
	});
});
