import { formatLength, UNIT_LABEL } from '$lib/offsets';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { toolsToCsv } from '$lib/server/tools/csv';
import type { RequestHandler } from './$types';

/** The machine's tool rack with current offsets as a CSV download. Any member may read. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const { csv, name } = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const { toolRows } = await machineOverview(trx, machine);
		return {
			name: machine.name,
			csv: toolsToCsv(
				toolRows.map((t) => ({
					...t,
					offset: t.value === null ? '' : formatLength(t.value, machine.units, machine.resolution),
					units: UNIT_LABEL[machine.units],
					measuredAt: t.measuredAt ?? ''
				}))
			)
		};
	});
	const file = `${name.replace(/[^A-Za-z0-9]+/g, '-').toLowerCase()}-tools.csv`;
	return new Response(csv, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${file}"`
		}
	});
};
