import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { currentOffsets, tableFrom } from '$lib/server/offsets/machine-state';
import {
	buildLoadProgram,
	fileSlug,
	programResponse,
	refusalResponse
} from '$lib/server/setups/load-program';
import type { RequestHandler } from './$types';

/** Every current offset of the machine as one `.nc` load program, or the engine's reasons (422). */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const { machine, table } = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		return { machine, table: tableFrom(machine, await currentOffsets(trx, machine.id)) };
	});
	const result = buildLoadProgram(machine, table, {
		title: machine.name,
		filename: fileSlug(machine.name, 'all offsets')
	});
	if (result.ok) return programResponse(result);
	return refusalResponse(
		event.request,
		machine.name,
		result.reasons,
		`/shops/${shop.slug}/machines/${machine.id}`
	);
};
