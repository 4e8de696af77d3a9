import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { setupFromParam, setupLoadProgram } from '$lib/server/setups/load';
import { programResponse, refusalResponse } from '$lib/server/setups/load-program';
import type { RequestHandler } from './$types';

/** The setup's load program as a `.nc` download, or a page with the engine's reasons (422). */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const setup = await withShop(shop, (trx) => setupFromParam(trx, event.params.setup));
	const result = setupLoadProgram(setup);
	if (result.ok) return programResponse(result);
	return refusalResponse(
		event.request,
		`setup "${setup.name}" on ${setup.machine.name}`,
		result.reasons,
		`/shops/${shop.slug}/setups/${setup.id}`
	);
};
