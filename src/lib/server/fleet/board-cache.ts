import type { ChangeFeed, ChangeMessage } from '../db/change-feed';

export interface BoardCacheOptions {
	feed: ChangeFeed;
	/**
	 * Longest a board is served from memory even without a change: staleness by age depends on
	 * the clock, not only on the data, and this bounds how late an age limit can show.
	 */
	maxAgeMs?: number;
	now?: () => number;
}

export interface BoardCache<T> {
	/**
	 * The shop's board, ready to send: from memory when nothing it reads has changed since it
	 * was built, else from `build` (which must build exactly that shop's board).
	 */
	get(schemaName: string, build: () => Promise<T>): Promise<T>;
	readonly size: number;
}

interface Entry<T> {
	body: T;
	generation: number;
	epoch: number;
	expiresAt: number;
}

/**
 * The fleet board per shop, kept in memory between changes. Every table the board reads
 * announces its committed changes (`board:<schema>`, migrations/shop/…_notify_board_changes),
 * so an entry is used only while no such message has arrived since it was built:
 *
 * - each shop has a generation, raised by every `board:<schema>` message; an entry remembers
 *   the generation it was built under, and a build stores its result only if the generation is
 *   unchanged when it finishes (a change committed during the build would otherwise be lost);
 * - `reset` (feed connected or lost) raises the epoch, which outdates every entry;
 * - while the feed is not live nothing is served from or stored into memory;
 * - concurrent misses for the same shop share one build.
 */
export function createBoardCache<T>(options: BoardCacheOptions): BoardCache<T> {
	const { feed } = options;
	const maxAgeMs = options.maxAgeMs ?? 5_000;
	const now = options.now ?? (() => Date.now());
	const entries = new Map<string, Entry<T>>();
	const generations = new Map<string, number>();
	const building = new Map<string, { generation: number; epoch: number; body: Promise<T> }>();
	let epoch = 0;

	feed.subscribe((m: ChangeMessage) => {
		if (m.kind === 'reset') {
			epoch++;
			entries.clear();
			return;
		}
		if (!m.payload.startsWith('board:')) return;
		const schema = m.payload.slice('board:'.length);
		generations.set(schema, (generations.get(schema) ?? 0) + 1);
		entries.delete(schema);
	});

	const generationOf = (schema: string) => generations.get(schema) ?? 0;

	return {
		get size() {
			return entries.size;
		},
		async get(schemaName, build) {
			if (!feed.live) return build();
			const generation = generationOf(schemaName);
			const atEpoch = epoch;
			const entry = entries.get(schemaName);
			if (
				entry &&
				entry.generation === generation &&
				entry.epoch === atEpoch &&
				now() < entry.expiresAt
			) {
				return entry.body;
			}
			const pending = building.get(schemaName);
			if (pending && pending.generation === generation && pending.epoch === atEpoch) {
				return pending.body;
			}
			const startedAt = now();
			const body = build();
			building.set(schemaName, { generation, epoch: atEpoch, body });
			try {
				const result = await body;
				if (feed.live && generationOf(schemaName) === generation && epoch === atEpoch) {
					entries.set(schemaName, {
						body: result,
						generation,
						epoch: atEpoch,
						expiresAt: startedAt + maxAgeMs
					});
				}
				return result;
			} finally {
				if (building.get(schemaName)?.body === body) building.delete(schemaName);
			}
		}
	};
}
