import { can } from '$lib/permissions';
import { SETUP_STATES, type SetupState } from '$lib/schemas/setups';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineChoices } from '$lib/server/machines/queries';
import { listSetups } from '$lib/server/setups/queries';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const machineParam = Number(event.url.searchParams.get('machine'));
	const stateParam = event.url.searchParams.get('state');
	const filter = {
		machineId: Number.isSafeInteger(machineParam) && machineParam > 0 ? machineParam : null,
		status: (SETUP_STATES as readonly string[]).includes(stateParam ?? '')
			? (stateParam as SetupState)
			: null
	};
	return withShop(shop, async (trx) => {
		const machines = await machineChoices(trx);
		const setups = await listSetups(trx, filter);
		return {
			setups,
			machines,
			filter,
			canCreate: can(role, 'setups.write')
		};
	});
};
