import { describe, expect, it } from 'vitest';
import { manualChangeFeed } from '../db/change-feed.fake';
import { createBoardCache } from './board-cache';

type BoardBytes = Uint8Array<ArrayBuffer>;

const bytes = (s: string): BoardBytes => new TextEncoder().encode(s);
const text = (b: BoardBytes) => new TextDecoder().decode(b);

/** A build the test finishes by hand, counting how often the cache asked for one. */
function builds(prefix: string) {
	let n = 0;
	const pending: (() => void)[] = [];
	return {
		get count() {
			return n;
		},
		now: () => Promise.resolve(bytes(`${prefix}${++n}`)),
		later: () =>
			new Promise<BoardBytes>((resolve) => {
				const k = ++n;
				pending.push(() => resolve(bytes(`${prefix}${k}`)));
			}),
		finish: () => pending.shift()?.()
	};
}

describe('createBoardCache', () => {
	it('serves the stored board until a change to that shop, then builds anew', async () => {
		const feed = manualChangeFeed();
		const cache = createBoardCache<BoardBytes>({ feed });
		const a = builds('A');
		const b = builds('B');
		expect(text(await cache.get('shop_1', a.now))).toBe('A1');
		expect(text(await cache.get('shop_1', a.now))).toBe('A1');
		expect(text(await cache.get('shop_2', b.now))).toBe('B1');
		feed.change('board:shop_1');
		expect(text(await cache.get('shop_1', a.now))).toBe('A2');
		expect(text(await cache.get('shop_2', b.now))).toBe('B1'); // another shop's change
		feed.change('memberships'); // not a board message
		expect(text(await cache.get('shop_1', a.now))).toBe('A2');
		expect(a.count).toBe(2);
	});

	it('does not keep a board that a change committed during its build made stale', async () => {
		const feed = manualChangeFeed();
		const cache = createBoardCache<BoardBytes>({ feed });
		const a = builds('A');
		const first = cache.get('shop_1', a.later);
		feed.change('board:shop_1'); // committed after the build's snapshot
		a.finish();
		expect(text(await first)).toBe('A1');
		expect(text(await cache.get('shop_1', a.now))).toBe('A2');
	});

	it('shares one build between requests that miss together', async () => {
		const feed = manualChangeFeed();
		const cache = createBoardCache<BoardBytes>({ feed });
		const a = builds('A');
		const waiting = [1, 2, 3].map(() => cache.get('shop_1', a.later));
		a.finish();
		expect((await Promise.all(waiting)).map(text)).toEqual(['A1', 'A1', 'A1']);
		expect(a.count).toBe(1);
	});

	it('serves nothing from memory while the feed is not live, and forgets all on reset', async () => {
		const feed = manualChangeFeed(false);
		const cache = createBoardCache<BoardBytes>({ feed });
		const a = builds('A');
		await cache.get('shop_1', a.now);
		await cache.get('shop_1', a.now);
		expect(a.count).toBe(2);
		expect(cache.size).toBe(0);
		feed.setLive(true);
		await cache.get('shop_1', a.now);
		expect(text(await cache.get('shop_1', a.now))).toBe('A3');
		feed.reset();
		expect(text(await cache.get('shop_1', a.now))).toBe('A4');
	});

	it('builds again once the board is older than maxAgeMs (ages depend on the clock)', async () => {
		const feed = manualChangeFeed();
		let clock = 0;
		const cache = createBoardCache<BoardBytes>({ feed, maxAgeMs: 5000, now: () => clock });
		const a = builds('A');
		await cache.get('shop_1', a.now);
		clock = 4999;
		expect(text(await cache.get('shop_1', a.now))).toBe('A1');
		clock = 5000;
		expect(text(await cache.get('shop_1', a.now))).toBe('A2');
	});

	it('lets a failed build fail its callers and keeps nothing', async () => {
		const feed = manualChangeFeed();
		const cache = createBoardCache<BoardBytes>({ feed });
		await expect(
			cache.get('shop_1', () => Promise.reject(new Error('database gone')))
		).rejects.toThrow('database gone');
		const a = builds('A');
		expect(text(await cache.get('shop_1', a.now))).toBe('A1');
	});
});
