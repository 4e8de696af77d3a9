import { programComponents } from '$lib/server/components/load-program';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineGate } from '$lib/server/offsets/gate';
import { auditIncluded, includeFlaggedRequested } from '$lib/server/setups/include-flagged';
import { buildLoadProgram, fileSlug } from '$lib/server/setups/load-program';
import { programResponse, refusalResponse } from '$lib/server/setups/load-program-response';
import type { RequestHandler } from './$types';

/**
 * Every current offset of the machine as one `.nc` load program, or the engine's reasons (422).
 * Stop and stale registers are withheld unless a lead asks for `?include=flagged` (audited).
 */
export const GET: RequestHandler = async (event) => {
	const { shop, role, user } = await requireMember(event, 'machines.read');
	const include = includeFlaggedRequested(event, role);
	const { machine, result } = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const gate = await machineGate(trx, machine);
		const result = buildLoadProgram(machine, gate.state.table, {
			title: machine.name,
			filename: fileSlug(machine.name, 'all offsets'),
			gate: {
				rows: [...Object.values(gate.work), ...Object.values(gate.tools)],
				...(include ? { includeFlaggedBy: user.name || user.email } : {})
			},
			components: await programComponents(trx, machine)
		});
		if (result.ok) await auditIncluded(trx, event, user, machine.name, result.included);
		return { machine, result };
	});
	if (result.ok) return programResponse(result);
	return refusalResponse(
		event.request,
		machine.name,
		result.reasons,
		`/shops/${shop.slug}/machines/${machine.id}`
	);
};
