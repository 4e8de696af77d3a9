import type { ChangeFeed } from './change-feed';

export interface FeedCache<V> {
	/** The value, unless absent, expired, dropped by a change, or the feed is not live. */
	get(key: string): V | undefined;
	/**
	 * Raised by every change message this cache acts on and by every reset. Read it before
	 * looking the value up and pass it to `set`: a value a change overtook is not kept.
	 */
	readonly version: number;
	set(key: string, value: V, versionAtLookup: number): void;
	readonly size: number;
}

/**
 * A small in-memory cache kept honest by the change feed (./change-feed.ts): entries live at
 * most `ttlMs`; `drops(payload)` says which entries a committed change makes wrong ('all', a
 * predicate, or null when the message is not about this cache); a reset (feed connected or
 * lost) empties it; while the feed is not live it neither answers nor stores. Bounded by
 * `maxEntries` (the oldest entry goes first: a bound, not an LRU).
 */
export function createFeedCache<V>(options: {
	feed: ChangeFeed;
	ttlMs: number;
	maxEntries?: number;
	drops: (payload: string) => 'all' | ((key: string, value: V) => boolean) | null;
	now?: () => number;
}): FeedCache<V> {
	const { feed, ttlMs, drops } = options;
	const maxEntries = options.maxEntries ?? 10_000;
	const now = options.now ?? (() => Date.now());
	const entries = new Map<string, { value: V; expiresAt: number }>();
	let version = 0;

	feed.subscribe((m) => {
		if (m.kind === 'reset') {
			version++;
			entries.clear();
			return;
		}
		const rule = drops(m.payload);
		if (rule === null) return;
		version++;
		if (rule === 'all') entries.clear();
		else for (const [key, e] of entries) if (rule(key, e.value)) entries.delete(key);
	});

	return {
		get size() {
			return entries.size;
		},
		get version() {
			return version;
		},
		get(key) {
			if (!feed.live) return undefined;
			const e = entries.get(key);
			if (!e) return undefined;
			if (now() >= e.expiresAt) {
				entries.delete(key);
				return undefined;
			}
			return e.value;
		},
		set(key, value, versionAtLookup) {
			if (!feed.live || versionAtLookup !== version) return;
			if (entries.size >= maxEntries && !entries.has(key)) {
				const oldest = entries.keys().next().value;
				if (oldest !== undefined) entries.delete(oldest);
			}
			entries.set(key, { value, expiresAt: now() + ttlMs });
		}
	};
}
