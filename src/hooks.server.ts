import type { Handle } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { handle as authHandle } from './auth';
import { createSessionCache, sessionKey } from '$lib/server/auth/session-cache';
import { db } from '$lib/server/db';
import { changeFeed, perProcess, startedChangeFeed } from '$lib/server/db/change-feed';
import { catchUp, parseWrote, WROTE_COOKIE, wroteCookie } from '$lib/server/db/read-your-writes';
import { config } from '$lib/server/config';
import { onlyReads } from '$lib/server/guard';
import { requestGuard } from '$lib/server/request-guard';
import { closeServerResources } from '$lib/server/shutdown';
import { findUserById } from '$lib/server/users';

const sessionCache = () => perProcess('sessions', () => createSessionCache(changeFeed()));

// adapter-node's graceful shutdown waits for the event loop to empty: close our connections,
// or SIGTERM would leave the process running.
perProcess('shutdown', () => process.once('sveltekit:shutdown', () => void closeServerResources()));

/**
 * Fills `locals.user` from the Auth.js session, re-reading the user so a deleted account's
 * cookie, or one issued before the account's last password reset / sign-out / removal
 * (session generation, users.session_generation), stops working at once. The answer is kept for a minute per session cookie
 * ($lib/server/auth/session-cache.ts: dropped when the user's row changes), which spares
 * most requests Auth.js's decryption; Auth.js re-issues the cookie (rolling expiry) on the
 * requests that do go through it. Access to shops is decided per load/action/endpoint by the
 * guard in $lib/server/guard (a layout-only check would be skipped on client navigation).
 */
const loadUser: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	const key = sessionKey(event.cookies.getAll());
	// No session cookie, no session (JWT sessions live only in that cookie): spare Auth.js.
	if (!key) return resolve(event);
	const sessions = sessionCache();
	const cached = sessions.get(key);
	if (cached) {
		event.locals.user = { ...cached };
		return resolve(event);
	}
	const version = sessions.version;
	const session = await event.locals.auth();
	const id = Number(session?.user?.id);
	const generation = (session?.user as { generation?: number } | undefined)?.generation;
	if (Number.isSafeInteger(id) && id > 0) {
		const user = await findUserById(db(), id);
		// A cookie from before a password reset, sign-out or removal carries an older
		// generation: it is not a session any more (and the browser is told to drop it).
		if (user && user.sessionGeneration !== generation) {
			for (const c of event.cookies.getAll())
				if (/^(__Secure-)?authjs\.session-token(\.\d+)?$/.test(c.name))
					event.cookies.delete(c.name, { path: '/' });
		} else if (user) {
			const signedIn = { id: user.id, email: user.email, name: user.name };
			event.locals.user = { ...signedIn };
			// Under the cookie that came in and under the one Auth.js just re-issued (if any).
			const renewed = sessionKey(event.cookies.getAll());
			for (const k of new Set([key, renewed])) if (k) sessions.set(k, signedIn, version);
		}
	}
	return resolve(event);
};

/**
 * After a request that may have written (anything but GET and HEAD), waits until this
 * process's caches have heard of every change committed so far (a millisecond or so), so the
 * user's next request sees their own change: a role they just gave, a finding they just
 * acknowledged.
 */
const ownWritesVisible: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (!onlyReads(event.request.method)) {
		await startedChangeFeed()?.sync();
		// For the other app nodes (read-your-writes.ts): when this user last wrote.
		const secure = event.url.protocol === 'https:';
		response.headers.append('set-cookie', wroteCookie(Date.now(), secure));
	}
	return response;
};

/**
 * Before anything reads a cache: if this user wrote recently (through any app node) and this
 * node's feed has not been heard up to then, wait for it ($lib/server/db/read-your-writes.ts).
 */
const othersWritesHeard: Handle = async ({ event, resolve }) => {
	const wroteAt = parseWrote(event.cookies.get(WROTE_COOKIE));
	const feed = wroteAt === undefined ? undefined : startedChangeFeed();
	if (feed && wroteAt !== undefined) await catchUp(feed, wroteAt);
	const response = await resolve(event);
	// Which node answered, when there are several (npm run cluster): for people and tests.
	if (config.nodeName) response.headers.set('x-datumkeep-node', config.nodeName);
	return response;
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	response.headers.set('X-Frame-Options', 'DENY');
	return response;
};

export const handle = sequence(
	requestGuard,
	othersWritesHeard,
	authHandle,
	loadUser,
	ownWritesVisible,
	securityHeaders
);
