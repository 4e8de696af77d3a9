import { can } from '$lib/permissions';
import { billingBanner } from '$lib/server/billing/banner';
import { countActiveMachines } from '$lib/server/billing/gate';
import { getShopBilling } from '$lib/server/billing/state';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async (event) => {
	const { shop, role } = await requireMember(event);
	// Billing news is for the people who can act on it (owners, admins); an operator at the
	// machine sees none of it (issue 18).
	const manages = can(role, 'billing');
	const [billing, machinesInUse] = manages
		? await Promise.all([getShopBilling(db(), shop.id), countActiveMachines(shop)])
		: [null, 0];
	return {
		shop: { slug: shop.slug, name: shop.name, timeZone: shop.timeZone },
		role,
		/** When the shop's data will be dropped, while its deletion grace period runs. */
		deletionPurgeAfter: shop.deletionPurgeAfter ?? null,
		nav: {
			members: can(role, 'members.manage'),
			audit: can(role, 'audit.read'),
			billing: manages,
			settings: can(role, 'settings.write')
		},
		billingBanner: billing
			? billingBanner(billing, true, new Date(), { machinesInUse, timeZone: shop.timeZone })
			: null
	};
};
