import { redirect, type RequestEvent } from '@sveltejs/kit';
import { signIn } from '../../../auth';
import { audit } from '../audit';
import { db } from '../db';
import { withShop } from '../db/tenant';
import { redis } from '../redis';
import { listMemberships } from '../shops/queries';
import { findUserByEmail } from '../users';
import { clientAddress } from './client-address';
import { verifyPassword } from './password';
import { clearSignInFailures, recordSignInFailure, signInBlocked } from './rate-limit';

export type SignInOutcome =
	| { ok: true; userId: number; email: string; name: string; sessionGeneration: number }
	| { ok: false; reason: 'credentials' }
	| { ok: false; reason: 'rate-limited'; retryAfterSeconds: number; retryAt: string };

/**
 * THE credentials check, called only from Auth.js's `authorize` (src/auth.ts), so the sign-in
 * page and a script posting to /auth/callback/credentials meet the same limit and leave the
 * same audit trail. One generic failure for an unknown e-mail and a wrong password alike,
 * with the same bcrypt work for both, so the answer never reveals who has an account.
 */
export async function authenticate(
	event: RequestEvent,
	email: string,
	password: string
): Promise<SignInOutcome> {
	const address = clientAddress(event);
	const limit = await signInBlocked(redis(), email, address);
	if (!limit.allowed) return rateLimited(limit.retryAfterSeconds);
	const user = await findUserByEmail(db(), email);
	const ok = await verifyPassword(password, user?.passwordHash);
	if (!user || !ok) {
		const after = await recordSignInFailure(redis(), email, address);
		await auditSignInFailure(event, user?.id ?? null, email);
		return after.allowed
			? { ok: false, reason: 'credentials' }
			: rateLimited(after.retryAfterSeconds);
	}
	await clearSignInFailures(redis(), email, address);
	await auditSignIn(event, user.id, user.email);
	return {
		ok: true,
		userId: user.id,
		email: user.email,
		name: user.name,
		sessionGeneration: user.sessionGeneration
	};
}

function rateLimited(seconds: number): SignInOutcome {
	return {
		ok: false,
		reason: 'rate-limited',
		retryAfterSeconds: seconds,
		retryAt: new Date(Date.now() + seconds * 1000).toISOString()
	};
}

/** "Try again at 10:42 UTC (in 2 minutes)." */
export function retryMessage(retryAt: string, retryAfterSeconds: number): string {
	const minutes = Math.max(1, Math.ceil(retryAfterSeconds / 60));
	const at = retryAt.slice(11, 16);
	return `Too many failed sign-ins for this account from here. Try again at ${at} UTC (in ${minutes} minute${minutes === 1 ? '' : 's'}).`;
}

/** A failed sign-in of a known account goes to its shops' audit logs (unknown e-mails have none). */
async function auditSignInFailure(
	event: RequestEvent,
	userId: number | null,
	email: string
): Promise<void> {
	if (userId === null) return;
	for (const m of await listMemberships(db(), userId)) {
		await withShop(m.shop, (trx) =>
			audit(trx, {
				actorUserId: userId,
				actorEmail: email,
				action: 'member.sign-in-failed',
				ip: clientAddress(event)
			})
		);
	}
}

/** Records the sign-in in the audit log of every shop the person belongs to. */
export async function auditSignIn(
	event: RequestEvent,
	userId: number,
	email: string
): Promise<void> {
	for (const m of await listMemberships(db(), userId)) {
		await withShop(m.shop, (trx) =>
			audit(trx, {
				actorUserId: userId,
				actorEmail: email,
				action: 'member.signed-in',
				ip: clientAddress(event)
			})
		);
	}
}

/**
 * Signs in through Auth.js's credentials callback (so through `authorize` and `authenticate`).
 * On success Auth.js sets the session cookie and this throws the redirect to `next`; on
 * failure it returns why (the page shows it). Auth.js's action reads a form body, so it gets a
 * fresh request carrying one.
 */
export async function trySignIn(
	event: RequestEvent,
	email: string,
	password: string,
	next: string
): Promise<Exclude<SignInOutcome, { ok: true }>> {
	const headers = new Headers(event.request.headers);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	const body = new URLSearchParams({
		providerId: 'credentials',
		email,
		password,
		redirectTo: safeNext(next)
	});
	const request = new Request(event.request.url, { method: 'POST', headers, body });
	event.locals.signInOutcome = undefined;
	try {
		await signIn({ ...event, request } as RequestEvent);
	} catch (e) {
		// `authorize` left its answer on locals (the same object in the copied event).
		const outcome = event.locals.signInOutcome as SignInOutcome | undefined;
		if (outcome && !outcome.ok) return outcome;
		throw e;
	}
	throw new Error('Auth.js did not redirect after sign-in');
}

/** Signs in a person whose password was just set (sign-up, invitation); refused → sign-in page. */
export async function startSession(
	event: RequestEvent,
	email: string,
	password: string,
	next: string
): Promise<never> {
	await trySignIn(event, email, password, next);
	redirect(303, `/signin?next=${encodeURIComponent(safeNext(next))}`);
}

/**
 * Only same-origin paths are followed after sign-in (no open redirect). Browsers drop tabs and
 * newlines from URLs and read `\` as `/`, so `/\t/evil.example` or `/\\evil.example` would leave
 * the site; anything but a plain path of safe characters goes to /shops.
 */
export function safeNext(next: string | null | undefined): string {
	const fallback = '/shops';
	if (!next) return fallback;
	// Printable ASCII only, no backslash: no control characters, no whitespace tricks.
	if (!/^[\x21-\x7e]+$/.test(next) || next.includes('\\')) return fallback;
	if (!next.startsWith('/') || next.startsWith('//')) return fallback;
	// Decoded once more (a server or browser may decode %2F%2F or %5C), it must still be a path.
	let decoded: string;
	try {
		decoded = decodeURIComponent(next);
	} catch {
		return fallback;
	}
	const controlOrBackslash = [...decoded].some(
		(c) => c.charCodeAt(0) < 0x20 || c === '\x7f' || c === '\\'
	);
	if (!/^\/(?![/\\])/.test(decoded) || controlOrBackslash) return fallback;
	// The final word: resolved against a dummy origin, it must stay on that origin.
	const origin = 'http://same.invalid';
	const url = new URL(next, origin);
	if (url.origin !== origin) return fallback;
	return url.pathname + url.search + url.hash;
}
