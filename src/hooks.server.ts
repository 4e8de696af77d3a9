import type { Handle } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { handle as authHandle } from './auth';
import { db } from '$lib/server/db';
import { findUserById } from '$lib/server/users';

/**
 * Fills `locals.user` from the Auth.js session, re-reading the user so a deleted account's
 * cookie stops working at once. Access to shops is decided per load/action/endpoint by the
 * guard in $lib/server/guard (a layout-only check would be skipped on client navigation).
 */
const loadUser: Handle = async ({ event, resolve }) => {
	event.locals.user = null;
	const session = await event.locals.auth();
	const id = Number(session?.user?.id);
	if (Number.isSafeInteger(id) && id > 0) {
		const user = await findUserById(db(), id);
		if (user) event.locals.user = { id: user.id, email: user.email, name: user.name };
	}
	return resolve(event);
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	response.headers.set('X-Frame-Options', 'DENY');
	return response;
};

export const handle = sequence(authHandle, loadUser, securityHeaders);
