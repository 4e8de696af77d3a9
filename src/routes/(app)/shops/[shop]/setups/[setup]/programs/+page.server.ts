import { can } from '$lib/permissions';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { uploadAction } from '$lib/server/programs/actions';
import {
	BACKGROUND_MIN_BYTES,
	BACKGROUND_MIN_LINES,
	PROGRAM_EXTENSIONS,
	PROGRAM_MAX_BYTES
} from '$lib/server/programs/file';
import { listPrograms } from '$lib/server/programs/queries';
import { setupFromParam } from '$lib/server/setups/load';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		return {
			setup: {
				id: setup.id,
				name: setup.name,
				job: setup.job,
				machineName: setup.machine.name,
				units: setup.machine.units
			},
			programs: await listPrograms(trx, setup.id),
			canWrite: can(role, 'setups.write'),
			limits: {
				maxBytes: PROGRAM_MAX_BYTES,
				backgroundBytes: BACKGROUND_MIN_BYTES,
				backgroundLines: BACKGROUND_MIN_LINES,
				extensions: [...PROGRAM_EXTENSIONS]
			}
		};
	});
};

export const actions: Actions = {
	upload: (event) => uploadAction(event)
};
