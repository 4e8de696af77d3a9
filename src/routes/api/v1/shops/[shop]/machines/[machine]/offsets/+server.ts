import { json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import type { RequestHandler } from './$types';

/**
 * A machine's current offsets with status and findings, as JSON: what the pages poll so another
 * operator's new reading shows without a reload. Any member may read.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const body = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const o = await machineOverview(trx, machine);
		return {
			machine: {
				id: machine.id,
				name: machine.name,
				units: machine.units,
				resolution: machine.resolution,
				convention: machine.convention
			},
			reference: o.state.reference
				? {
						version: o.state.reference.version,
						establishedAt: o.state.reference.establishedAt,
						gaugeLineZ: o.state.reference.gaugeLineZ
					}
				: null,
			tools: o.toolRows,
			fixtures: o.fixtureRows,
			machineFindings: o.machineFindings,
			asOf: new Date().toISOString()
		};
	});
	return json(body, { headers: { 'cache-control': 'no-store' } });
};
