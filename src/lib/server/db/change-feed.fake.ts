import type { ChangeFeed, ChangeMessage } from './change-feed';

/**
 * A change feed the unit tests drive by hand (the real one needs PostgreSQL; it is tested in
 * tests/integration/change-feed.test.ts). Not used by the app.
 */
export function manualChangeFeed(live = true) {
	const subscribers = new Set<(m: ChangeMessage) => void>();
	const state = { live };
	const feed: ChangeFeed & {
		change(payload: string): void;
		reset(): void;
		setLive(v: boolean): void;
	} = {
		get live() {
			return state.live;
		},
		subscribe(fn) {
			subscribers.add(fn);
			return () => subscribers.delete(fn);
		},
		async sync() {},
		get heardUpTo() {
			return state.live ? Date.now() : 0;
		},
		async stop() {
			state.live = false;
		},
		change(payload) {
			for (const fn of subscribers) fn({ kind: 'change', payload });
		},
		reset() {
			for (const fn of subscribers) fn({ kind: 'reset' });
		},
		setLive(v) {
			state.live = v;
		}
	};
	return feed;
}
