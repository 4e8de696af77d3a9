import pg from 'pg';
import { config } from '../config';

/** The channel the change triggers notify on (migrations/public/…_create_change_notifications). */
export const CHANGE_CHANNEL = 'datumkeep_changes';

/**
 * What a cache is told: a committed change (`board:<schema>`, `user:<id>`), or `reset` when
 * messages may have been missed (the feed connected, lost its connection, or stopped) — a cache
 * must then forget everything.
 */
export type ChangeMessage = { kind: 'change'; payload: string } | { kind: 'reset' };

export interface ChangeFeed {
	/** True while LISTEN is in place: only then may a cache trust that it hears every change. */
	readonly live: boolean;
	subscribe(fn: (message: ChangeMessage) => void): () => void;
	stop(): Promise<void>;
}

/**
 * One PostgreSQL connection that LISTENs for the change triggers' messages and passes them to
 * the in-memory caches of this process (fleet board, signed-in users). PostgreSQL sends a
 * NOTIFY only when its transaction commits, so every instance of the app hears every committed
 * change to the data it caches, whichever process made it (app, worker, psql).
 *
 * When the connection drops, the feed is not live and says `reset`; caches then serve nothing
 * from memory until it is back (reconnecting with back-off up to 30 s), and start empty.
 */
export function createChangeFeed(url: string = config.databaseUrl): ChangeFeed {
	const subscribers = new Set<(m: ChangeMessage) => void>();
	let live = false;
	let stopped = false;
	let client: pg.Client | undefined;
	let retryMs = 500;
	let timer: ReturnType<typeof setTimeout> | undefined;

	const emit = (m: ChangeMessage) => {
		for (const fn of subscribers) {
			try {
				fn(m);
			} catch (e) {
				console.error('change feed subscriber failed', e);
			}
		}
	};

	const lose = (c: pg.Client) => {
		if (client !== c) return;
		client = undefined;
		live = false;
		emit({ kind: 'reset' });
		c.removeAllListeners();
		c.on('error', () => {});
		c.end().catch(() => {});
		if (stopped) return;
		timer = setTimeout(connect, retryMs);
		timer.unref?.();
		retryMs = Math.min(retryMs * 2, 30_000);
	};

	async function connect(): Promise<void> {
		timer = undefined;
		if (stopped) return;
		const c = new pg.Client({ connectionString: url, keepAlive: true });
		client = c;
		c.on('error', () => lose(c));
		c.on('end', () => lose(c));
		c.on('notification', (n) => {
			if (n.channel === CHANGE_CHANNEL && n.payload) emit({ kind: 'change', payload: n.payload });
		});
		try {
			await c.connect();
			await c.query(`listen ${CHANGE_CHANNEL}`);
			if (client !== c || stopped) return;
			// Anything committed while nobody listened is unknown: start from empty caches.
			emit({ kind: 'reset' });
			live = true;
			retryMs = 500;
		} catch {
			lose(c);
		}
	}

	void connect();

	return {
		get live() {
			return live;
		},
		subscribe(fn) {
			subscribers.add(fn);
			return () => subscribers.delete(fn);
		},
		async stop() {
			stopped = true;
			if (timer) clearTimeout(timer);
			const c = client;
			client = undefined;
			live = false;
			emit({ kind: 'reset' });
			if (c) {
				c.removeAllListeners();
				c.on('error', () => {});
				await c.end().catch(() => {});
			}
		}
	};
}

const KEY = Symbol.for('datumkeep.changeFeed');
type Holder = { [KEY]?: ChangeFeed };

/**
 * The process's change feed, started on first use. Kept on globalThis so Vite's module reloads
 * in development do not open a second LISTEN connection.
 */
export function changeFeed(): ChangeFeed {
	const g = globalThis as Holder;
	g[KEY] ??= createChangeFeed();
	return g[KEY];
}

export async function stopChangeFeed(): Promise<void> {
	const g = globalThis as Holder;
	const feed = g[KEY];
	g[KEY] = undefined;
	await feed?.stop();
}
