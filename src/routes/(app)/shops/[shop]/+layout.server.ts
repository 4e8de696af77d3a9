import { can } from '$lib/permissions';
import { billingBanner } from '$lib/server/billing/banner';
import { getShopBilling } from '$lib/server/billing/state';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async (event) => {
	const { shop, role } = await requireMember(event);
	const billing = await getShopBilling(db(), shop.id);
	return {
		shop: { slug: shop.slug, name: shop.name },
		role,
		nav: {
			members: can(role, 'members.manage'),
			audit: can(role, 'audit.read'),
			billing: can(role, 'billing')
		},
		billingBanner: billingBanner(billing, can(role, 'billing'))
	};
};
