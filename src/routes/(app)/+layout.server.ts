import { requireUser } from '$lib/server/guard';
import { db } from '$lib/server/db';
import { listMemberships } from '$lib/server/shops/queries';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async (event) => {
	const user = requireUser(event);
	const memberships = await listMemberships(db(), user.id);
	return {
		user: { name: user.name, email: user.email },
		shops: memberships.map((m) => ({ slug: m.shop.slug, name: m.shop.name, role: m.role }))
	};
};
