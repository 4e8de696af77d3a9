import { error, json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { componentFromParams, componentRecord } from '$lib/server/components/history';
import type { RequestHandler } from './$types';

/**
 * One component register's record (issue 20), as its history page shows it: every version
 * newest first with its source, who, when, reason and override, and the register's open
 * findings. `kind` work|tool, `register` G54…/H number, `component` x|y|radius|length-wear|
 * radius-wear. Any member; 404 for what names no component register.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const p = componentFromParams(event.params.kind, event.params.register, event.params.component);
	if (!p) error(404, 'No such offset component (X or Y of a work offset; radius or wear of an H).');
	const body = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		return {
			machineId: machine.id,
			units: machine.units,
			...p,
			...(await componentRecord(trx, machine.id, p.kind, p.register, p.component))
		};
	});
	return json(body, { headers: { 'cache-control': 'no-store' } });
};
