import { json } from '@sveltejs/kit';
import { requireMember } from '$lib/server/guard';
import { withShop } from '$lib/server/db/tenant';
import { listMachineSummaries } from '$lib/server/machines/queries';
import type { RequestHandler } from './$types';

/** The shop's machines with counts and ages, as JSON. Any member may read. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const machines = await withShop(shop, (trx) => listMachineSummaries(trx));
	return json({ machines });
};
