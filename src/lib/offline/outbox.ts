/**
 * Readings kept on this device while the connection is down (the "outbox"), in IndexedDB
 * through idb-keyval. Each entry is the exact JSON the machine's readings API takes
 * ($lib/schemas/queued-reading) plus what the list shows. Entries belong to the member who
 * saved them (`user`) and are sent only while that member is signed in; signing out deletes
 * them (after a warning). Browser only.
 */
import { clear, createStore, del, get, set, values, type UseStore } from 'idb-keyval';
import type { QueuedReading, QueuedReadingAnswer, QueueStop } from '$lib/schemas/queued-reading';

export type OutboxState = 'waiting' | 'needs-decision' | 'refused';

export interface OutboxEntry {
	key: string;
	user: string;
	shop: string;
	machineId: number;
	machineName: string;
	/** "H2 (T2)" or "G54 part top". */
	label: string;
	/** What was typed, e.g. "-14.7504 in", shown while it waits. */
	typed: string;
	body: QueuedReading;
	state: OutboxState;
	reasons?: QueueStop[];
	issues?: { field: string; message: string }[];
	formUrl?: string;
	/** The last time sending failed for want of a connection (ISO), for the list. */
	lastTry?: string;
}

let store: UseStore | undefined;
const db = () => (store ??= createStore('datumkeep-outbox', 'readings'));

let shared: BroadcastChannel | null | undefined;
const channel = () =>
	shared !== undefined
		? shared
		: (shared =
				typeof BroadcastChannel === 'undefined' ? null : new BroadcastChannel('datumkeep-outbox'));
const listeners = new Set<() => void>();

/** Tells this tab's lists and the other tabs that the outbox changed. */
function changed() {
	for (const l of listeners) l();
	channel()?.postMessage('changed');
}

/** Calls `fn` whenever the outbox changes (in this tab or another); returns the unsubscribe. */
export function onOutboxChange(fn: () => void): () => void {
	listeners.add(fn);
	const ch = channel();
	ch?.addEventListener('message', fn);
	return () => {
		listeners.delete(fn);
		ch?.removeEventListener('message', fn);
	};
}

export async function listOutbox(user?: string): Promise<OutboxEntry[]> {
	const all = await values<OutboxEntry>(db());
	return all
		.filter((e) => !user || e.user === user)
		.sort((a, b) => a.body.measuredAt.localeCompare(b.body.measuredAt));
}

export async function addToOutbox(entry: OutboxEntry): Promise<void> {
	await set(entry.key, entry, db());
	changed();
}

export async function removeFromOutbox(key: string): Promise<void> {
	await del(key, db());
	changed();
}

/** Deletes every kept reading on this device (sign-out). */
export async function clearOutbox(): Promise<void> {
	await clear(db());
	changed();
}

export type SendResult =
	| {
			key: string;
			result: 'sent';
			answer: Extract<QueuedReadingAnswer, { outcome: 'saved' | 'duplicate' }>;
	  }
	| { key: string; result: 'held' | 'offline' | 'error' };

let sending: Promise<SendResult[]> | null = null;

/**
 * Sends every waiting entry of `user`, oldest first, one at a time (one run at a time per tab;
 * the server's unique key makes a second tab's run harmless). Recorded ones leave the outbox;
 * Stop and refused ones stay, marked for the operator; a network failure stops the run.
 */
export function sendOutbox(user: string): Promise<SendResult[]> {
	sending ??= (async () => {
		const out: SendResult[] = [];
		try {
			for (const e of await listOutbox(user)) {
				if (e.state !== 'waiting') continue;
				let res: Response;
				try {
					res = await fetch(`/api/v1/shops/${e.shop}/machines/${e.machineId}/readings`, {
						method: 'POST',
						headers: { 'content-type': 'application/json' },
						body: JSON.stringify(e.body)
					});
				} catch {
					const fresh = await get<OutboxEntry>(e.key, db());
					if (fresh) await set(e.key, { ...fresh, lastTry: new Date().toISOString() }, db());
					out.push({ key: e.key, result: 'offline' });
					break;
				}
				const answer = (await res.json().catch(() => null)) as QueuedReadingAnswer | null;
				if (answer && (answer.outcome === 'saved' || answer.outcome === 'duplicate')) {
					await del(e.key, db());
					out.push({ key: e.key, result: 'sent', answer });
				} else if (answer && answer.outcome === 'needs-decision') {
					await set(
						e.key,
						{ ...e, state: 'needs-decision', reasons: answer.reasons, formUrl: answer.formUrl },
						db()
					);
					out.push({ key: e.key, result: 'held' });
				} else if (answer && answer.outcome === 'refused') {
					await set(
						e.key,
						{ ...e, state: 'refused', issues: answer.issues, formUrl: answer.formUrl },
						db()
					);
					out.push({ key: e.key, result: 'held' });
				} else {
					// Signed out, no longer a member, or the server failed: try again later.
					out.push({ key: e.key, result: 'error' });
				}
			}
		} finally {
			sending = null;
			changed();
		}
		return out;
	})();
	return sending;
}
