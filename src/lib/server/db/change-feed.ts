import { randomUUID } from 'node:crypto';
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
	/**
	 * Resolves once every change committed before the call has reached the subscribers: sends a
	 * marker through the channel and waits for it (PostgreSQL delivers notifications in commit
	 * order). The app calls it after each request that may have written, so this instance's
	 * caches already reflect a user's own change on their next request. If the marker does not
	 * come back in `timeoutMs`, the connection counts as lost (subscribers get `reset`).
	 */
	sync(timeoutMs?: number): Promise<void>;
	/**
	 * An instant (this process's clock, ms) such that every change committed before it has
	 * reached the subscribers — or their caches were emptied after it: the send time of the last
	 * marker that came back, or when LISTEN was put in place. 0 while not live.
	 */
	readonly heardUpTo: number;
	stop(): Promise<void>;
}

/**
 * One PostgreSQL connection that LISTENs for the change triggers' messages and passes them to
 * the in-memory caches of this process (fleet board, signed-in users). PostgreSQL sends a
 * NOTIFY only when its transaction commits, so every instance of the app hears every committed
 * change to the data it caches, whichever process made it (app, worker, psql).
 *
 * When the connection drops, the feed is not live and says `reset`; caches then serve nothing
 * from memory until it is back (reconnecting with back-off up to 30 s), and start empty. A
 * connection that is open but no longer delivers (a dead peer, a pooler that drops LISTEN)
 * is caught by a heartbeat: every `heartbeatMs` (10 s) a marker goes round the channel, and
 * one that does not come back within `heartbeatTimeoutMs` (5 s) — like a sync() marker that
 * does not — counts as a lost connection. Connecting and LISTEN give up after 10 s.
 *
 * sync() makes a request's own writes visible to this process's caches; other instances of
 * the app hear them when the notification reaches them (normally within milliseconds).
 */
export function createChangeFeed(
	url: string = config.databaseDirectUrl,
	options: { heartbeatMs?: number; heartbeatTimeoutMs?: number; connectTimeoutMs?: number } = {}
): ChangeFeed {
	const heartbeatMs = options.heartbeatMs ?? 10_000;
	const heartbeatTimeoutMs = options.heartbeatTimeoutMs ?? 5_000;
	const connectTimeoutMs = options.connectTimeoutMs ?? 10_000;
	const subscribers = new Set<(m: ChangeMessage) => void>();
	let live = false;
	let stopped = false;
	let client: pg.Client | undefined;
	let retryMs = 500;
	let timer: ReturnType<typeof setTimeout> | undefined;
	// Markers of this feed's sync() calls; other processes' markers are ignored.
	const syncPrefix = `sync:${randomUUID()}:`;
	let syncSeq = 0;
	const awaitingSync = new Map<string, () => void>();
	// One query at a time on the feed's connection (pg deprecates overlapping queries on one
	// client): heartbeats and sync() markers wait their turn.
	let sending: Promise<unknown> = Promise.resolve();
	let heardUpTo = 0;

	const emit = (m: ChangeMessage) => {
		for (const fn of subscribers) {
			try {
				fn(m);
			} catch (e) {
				console.error('change feed subscriber failed', e);
			}
		}
	};

	/** Sends a marker through the channel on `c`; true when it came back within `timeoutMs`. */
	const roundTrip = async (c: pg.Client, timeoutMs: number): Promise<boolean> => {
		const marker = `${syncPrefix}${++syncSeq}`;
		const sentAt = Date.now();
		let timeout: ReturnType<typeof setTimeout> | undefined;
		const arrived = await new Promise<boolean>((resolve) => {
			awaitingSync.set(marker, () => resolve(true));
			timeout = setTimeout(() => resolve(false), timeoutMs);
			const send = sending.then(() =>
				c.query('select pg_notify($1, $2)', [CHANGE_CHANNEL, marker])
			);
			sending = send.catch(() => {});
			send.catch(() => resolve(false));
		});
		clearTimeout(timeout);
		awaitingSync.delete(marker);
		if (arrived && client === c) heardUpTo = Math.max(heardUpTo, sentAt);
		return arrived;
	};

	const heartbeat = setInterval(async () => {
		const c = client;
		if (!live || !c) return;
		if (!(await roundTrip(c, heartbeatTimeoutMs))) lose(c);
	}, heartbeatMs);
	heartbeat.unref?.();

	const lose = (c: pg.Client) => {
		if (client !== c) return;
		client = undefined;
		live = false;
		heardUpTo = 0;
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
		sending = Promise.resolve(); // nothing queued behind a lost connection's last query
		const c = new pg.Client({
			connectionString: url,
			keepAlive: true,
			keepAliveInitialDelayMillis: 10_000,
			// A server that accepts the connection and then says nothing must not stall the feed.
			connectionTimeoutMillis: connectTimeoutMs,
			query_timeout: connectTimeoutMs
		});
		client = c;
		c.on('error', () => lose(c));
		c.on('end', () => lose(c));
		c.on('notification', (n) => {
			if (n.channel !== CHANGE_CHANNEL || !n.payload) return;
			if (n.payload.startsWith('sync:')) return awaitingSync.get(n.payload)?.();
			emit({ kind: 'change', payload: n.payload });
		});
		try {
			await c.connect();
			const listenAt = Date.now();
			await c.query(`listen ${CHANGE_CHANNEL}`);
			if (client !== c || stopped) return;
			// Anything committed while nobody listened is unknown: start from empty caches.
			emit({ kind: 'reset' });
			live = true;
			heardUpTo = listenAt;
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
		get heardUpTo() {
			return live ? heardUpTo : 0;
		},
		subscribe(fn) {
			subscribers.add(fn);
			return () => subscribers.delete(fn);
		},
		async sync(timeoutMs = 1000) {
			const c = client;
			if (!live || !c) return;
			// A marker that does not come back means the connection no longer delivers.
			if (!(await roundTrip(c, timeoutMs))) lose(c);
		},
		async stop() {
			stopped = true;
			clearInterval(heartbeat);
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

const KEY = Symbol.for('datumkeep.perProcess');
type Holder = { [KEY]?: Map<string, unknown> };
const perProcessValues = () => ((globalThis as Holder)[KEY] ??= new Map());

/**
 * One `make()` per process under `name`, kept on globalThis: Vite's module reloads in
 * development re-run module code, and must not open a second LISTEN connection or leave an
 * old cache subscribed to the feed.
 */
export function perProcess<T>(name: string, make: () => T): T {
	const values = perProcessValues();
	if (!values.has(name)) values.set(name, make());
	return values.get(name) as T;
}

/** The process's change feed, started on first use. */
export function changeFeed(): ChangeFeed {
	return perProcess('changeFeed', () => createChangeFeed());
}

/** The process's change feed if something has started it (nothing to wait for otherwise). */
export function startedChangeFeed(): ChangeFeed | undefined {
	return perProcessValues().get('changeFeed') as ChangeFeed | undefined;
}

/** Stops the feed and forgets every per-process cache built on it (shutdown). */
export async function stopChangeFeed(): Promise<void> {
	const values = perProcessValues();
	const feed = values.get('changeFeed') as ChangeFeed | undefined;
	values.clear();
	await feed?.stop();
}
