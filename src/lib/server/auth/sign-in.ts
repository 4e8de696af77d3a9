import type { RequestEvent } from '@sveltejs/kit';
import { signIn } from '../../../auth';
import { audit } from '../audit';
import { db } from '../db';
import { withShop } from '../db/tenant';
import { redis } from '../redis';
import { listMemberships } from '../shops/queries';
import { findUserByEmail } from '../users';
import { clientAddress } from './client-address';
import { verifyPassword } from './password';
import { clear, recordSignInFailure, signInBlocked, signInKeys } from './rate-limit';

export type SignInOutcome =
	| { ok: true; userId: number }
	| { ok: false; reason: 'credentials' }
	| { ok: false; reason: 'rate-limited'; retryAfterSeconds: number };

/**
 * Checks an e-mail and password under the rate limit. One generic failure for an unknown
 * e-mail and a wrong password alike, so the answer never reveals who has an account.
 */
export async function checkCredentials(
	event: RequestEvent,
	email: string,
	password: string
): Promise<SignInOutcome> {
	const address = clientAddress(event);
	const limit = await signInBlocked(redis(), email, address);
	if (!limit.allowed)
		return { ok: false, reason: 'rate-limited', retryAfterSeconds: limit.retryAfterSeconds };
	const user = await findUserByEmail(db(), email);
	const ok = await verifyPassword(password, user?.passwordHash);
	if (!user || !ok) {
		await recordSignInFailure(redis(), email, address);
		return { ok: false, reason: 'credentials' };
	}
	await clear(redis(), signInKeys.email(email));
	return { ok: true, userId: user.id };
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
 * Hands verified credentials to Auth.js, which sets the session cookie and throws the redirect
 * to `next`. Auth.js's action reads a form body, so it gets a fresh request carrying one.
 */
export async function startSession(
	event: RequestEvent,
	email: string,
	password: string,
	next: string
): Promise<never> {
	const headers = new Headers(event.request.headers);
	headers.set('content-type', 'application/x-www-form-urlencoded');
	const body = new URLSearchParams({
		providerId: 'credentials',
		email,
		password,
		redirectTo: safeNext(next)
	});
	const request = new Request(event.request.url, { method: 'POST', headers, body });
	await signIn({ ...event, request } as RequestEvent);
	throw new Error('Auth.js did not redirect after sign-in');
}

/** Only same-site paths are followed after sign-in (no open redirect). */
export function safeNext(next: string | null | undefined): string {
	if (!next || !next.startsWith('/') || next.startsWith('//') || next.startsWith('/\\'))
		return '/shops';
	return next;
}
