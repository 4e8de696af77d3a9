import { redirect } from '@sveltejs/kit';
import { signOut } from '../../../auth';
import { db } from '$lib/server/db';
import { endAllSessions } from '$lib/server/users';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => redirect(303, '/');

export const actions: Actions = {
	/**
	 * Signing out ends every session of the person (all browsers and devices): a JWT cookie
	 * cannot be taken back, so its generation is made stale instead (hooks.server.ts).
	 */
	default: async (event) => {
		if (event.locals.user) await endAllSessions(db(), event.locals.user.id);
		return signOut(event);
	}
};
