import { json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { listPrograms } from '$lib/server/programs/queries';
import { setupFromParam } from '$lib/server/setups/load';
import type { RequestHandler } from './$types';

/** The setup's programs, each with its newest version and that version's check status. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const programs = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		return listPrograms(trx, setup.id);
	});
	return json({ programs });
};
