import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireUser } from '$lib/server/guard';
import { formerMembership } from '$lib/server/shops/lifecycle';
import type { PageServerLoad } from './$types';

/**
 * "You no longer have access": only for the person who was removed from (or belonged to a
 * deleted) shop with this slug; anyone else gets the same 404 as for a shop that never existed.
 */
export const load: PageServerLoad = async (event) => {
	const user = requireUser(event);
	const former = await formerMembership(db(), user.id, event.params.slug);
	if (!former) error(404, 'Not found');
	return {
		shopName: former.shopName,
		reason: former.reason,
		at: former.removedAt.toISOString()
	};
};
