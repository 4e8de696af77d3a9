import { can } from '$lib/permissions';
import { requireMember } from '$lib/server/guard';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async (event) => {
	const { shop, role } = await requireMember(event);
	return {
		shop: { slug: shop.slug, name: shop.name },
		role,
		nav: {
			members: can(role, 'members.manage'),
			audit: can(role, 'audit.read')
		}
	};
};
