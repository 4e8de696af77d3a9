import { can } from '$lib/permissions';
import { requireMember } from '$lib/server/guard';
import { withShop } from '$lib/server/db/tenant';
import { listMachineSummaries } from '$lib/server/machines/queries';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const machines = await withShop(shop, (trx) => listMachineSummaries(trx));
	return { machines, canAdd: can(role, 'machines.write') };
};
