import { can } from '$lib/permissions';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { activeSetup } from '$lib/server/machines/machine-mode';
import { machineOverview } from '$lib/server/offsets/overview';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const overview = await machineOverview(trx, machine);
		return {
			machine,
			setup: await activeSetup(trx, machine.id),
			tools: overview.toolRows,
			fixtures: overview.fixtureRows,
			machineFindings: overview.machineFindings,
			reference: overview.state.reference,
			canRecord: can(role, 'setups.write'),
			loadedAt: new Date().toISOString()
		};
	});
};
