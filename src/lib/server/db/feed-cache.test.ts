import { describe, expect, it } from 'vitest';
import { manualChangeFeed } from './change-feed.fake';
import { createFeedCache } from './feed-cache';

const make = (opts: { live?: boolean; ttlMs?: number; maxEntries?: number } = {}) => {
	const feed = manualChangeFeed(opts.live ?? true);
	let clock = 1_000;
	const cache = createFeedCache<{ owner: number }>({
		feed,
		ttlMs: opts.ttlMs ?? 100,
		maxEntries: opts.maxEntries,
		now: () => clock,
		drops: (p) =>
			p === 'everything'
				? 'all'
				: p.startsWith('owner:')
					? (_k, v) => v.owner === Number(p.slice(6))
					: null
	});
	return { feed, cache, tick: (ms: number) => (clock += ms) };
};

describe('createFeedCache', () => {
	it('answers what was stored until the time limit, then nothing', () => {
		const { cache, tick } = make({ ttlMs: 100 });
		cache.set('a', { owner: 1 }, cache.version);
		expect(cache.get('a')).toEqual({ owner: 1 });
		tick(99);
		expect(cache.get('a')).toEqual({ owner: 1 });
		tick(1);
		expect(cache.get('a')).toBeUndefined();
	});

	it('drops exactly the entries a change names, and all of them on "all"', () => {
		const { feed, cache } = make();
		cache.set('a', { owner: 1 }, cache.version);
		cache.set('b', { owner: 2 }, cache.version);
		feed.change('owner:1');
		expect(cache.get('a')).toBeUndefined();
		expect(cache.get('b')).toEqual({ owner: 2 });
		feed.change('something else'); // not about this cache
		expect(cache.get('b')).toEqual({ owner: 2 });
		feed.change('everything');
		expect(cache.get('b')).toBeUndefined();
	});

	it('does not keep a value that a change overtook while it was looked up', () => {
		const { feed, cache } = make();
		const version = cache.version;
		feed.change('owner:7'); // committed while the lookup ran
		cache.set('a', { owner: 7 }, version);
		expect(cache.get('a')).toBeUndefined();
		expect(cache.size).toBe(0);
	});

	it('empties on reset and neither answers nor stores while the feed is not live', () => {
		const { feed, cache } = make();
		cache.set('a', { owner: 1 }, cache.version);
		feed.reset();
		expect(cache.get('a')).toBeUndefined();
		cache.set('a', { owner: 1 }, cache.version);
		feed.setLive(false);
		expect(cache.get('a')).toBeUndefined();
		cache.set('b', { owner: 2 }, cache.version);
		feed.setLive(true);
		expect(cache.get('b')).toBeUndefined();
	});

	it('holds at most maxEntries, dropping the oldest', () => {
		const { cache } = make({ maxEntries: 2 });
		cache.set('a', { owner: 1 }, cache.version);
		cache.set('b', { owner: 2 }, cache.version);
		cache.set('c', { owner: 3 }, cache.version);
		expect(cache.size).toBe(2);
		expect(cache.get('a')).toBeUndefined();
		expect(cache.get('c')).toEqual({ owner: 3 });
	});
});
