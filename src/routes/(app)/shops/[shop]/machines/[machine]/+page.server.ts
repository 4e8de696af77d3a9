import { can } from '$lib/permissions';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { machineVerification } from '$lib/server/readbacks/status';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const overview = await machineOverview(trx, machine);
		const setups = await trx('setups')
			.where({ machine_id: machine.id })
			.orderBy('created_at', 'desc')
			.limit(10)
			.select('id', 'name', 'job', 'status');
		const verification = await machineVerification(trx, machine.id);
		return {
			machine,
			reference: overview.state.reference,
			tools: overview.toolRows,
			fixtures: overview.fixtureRows,
			machineFindings: overview.machineFindings,
			setups: setups.map((s) => ({ id: Number(s.id), name: s.name, job: s.job, status: s.status })),
			atControl: {
				verified: verification.filter((v) => v.state === 'verified').length,
				mismatched: verification
					.filter((v) => v.state === 'mismatched')
					.map((v) => (v.kind === 'tool' ? `H${v.register}` : v.register)),
				unverified: verification.filter((v) => v.state === 'unverified').length
			},
			canEdit: can(role, 'machines.write'),
			canRecord: can(role, 'setups.write')
		};
	});
};
