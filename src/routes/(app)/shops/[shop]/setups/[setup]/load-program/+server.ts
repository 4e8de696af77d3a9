import { programComponents } from '$lib/server/components/load-program';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { auditIncluded, includeFlaggedRequested } from '$lib/server/setups/include-flagged';
import { setupFromParam, setupLoadProgram } from '$lib/server/setups/load';
import { programResponse, refusalResponse } from '$lib/server/setups/load-program-response';
import type { RequestHandler } from './$types';

/**
 * The setup's load program as a `.nc` download, or a page with the engine's reasons (422).
 * Stop and stale registers are withheld (named in a comment); `?include=flagged` — a lead's
 * explicit choice — writes them with a warning comment each, and is audited.
 */
export const GET: RequestHandler = async (event) => {
	const { shop, role, user } = await requireMember(event, 'machines.read');
	const include = includeFlaggedRequested(event, role);
	const { setup, result } = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		const result = setupLoadProgram(
			setup,
			include ? user.name || user.email : undefined,
			await programComponents(trx, setup.machine)
		);
		if (result.ok)
			await auditIncluded(
				trx,
				event,
				user,
				`${setup.machine.name} setup "${setup.name}"`,
				result.included
			);
		return { setup, result };
	});
	if (result.ok) return programResponse(result);
	return refusalResponse(
		event.request,
		`setup "${setup.name}" on ${setup.machine.name}`,
		result.reasons,
		`/shops/${shop.slug}/setups/${setup.id}`
	);
};
