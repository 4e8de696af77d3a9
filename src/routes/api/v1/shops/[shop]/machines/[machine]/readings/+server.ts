import { error, json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { recentReadings, registerFromParam, registerHistory } from '$lib/server/readings/history';
import { queuedReadingPost } from '$lib/server/readings/queued-post';
import type { RequestHandler } from './$types';
import { numberTextMessage, readNumberText } from '$lib/offsets/number-text';

/**
 * A machine's recent readings, newest first (`?limit=`, default 20, at most 200), or with
 * `?kind=tool|work&register=…` every version of one offset, oldest first. Any member may read.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const q = event.url.searchParams;
	const kind = q.get('kind');
	const registerParam = q.get('register');
	const limitParam = q.get('limit');
	// Query numbers go through the same strict reader as forms ("20abc" is not 20).
	const read = limitParam === null ? null : readNumberText(limitParam, { whole: true });
	if (read && !read.ok)
		error(400, numberTextMessage('limit', limitParam, read.reason, { whole: true }));
	const limit = read?.ok ? read.value : 20;
	if (limit < 1 || limit > 200) error(400, 'limit must be a whole number from 1 to 200.');
	if ((kind === null) !== (registerParam === null))
		error(400, 'Give both kind (tool or work) and register, or neither.');
	const body = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		if (kind !== null && registerParam !== null) {
			const register = registerFromParam(kind, registerParam);
			if (!register || (kind !== 'tool' && kind !== 'work'))
				error(400, 'kind must be tool (register = H number) or work (register = G54…).');
			return {
				machineId: machine.id,
				kind,
				register,
				rows: await registerHistory(trx, machine, kind, register)
			};
		}
		return { machineId: machine.id, rows: await recentReadings(trx, machine, limit) };
	});
	return json(
		{ ...body, asOf: new Date().toISOString() },
		{ headers: { 'cache-control': 'no-store' } }
	);
};

/**
 * A reading queued on a device while offline, sent now (JSON, see $lib/schemas/queued-reading):
 * 201 recorded, 200 already recorded under this key, 409 not recorded (Stop: the operator
 * decides), 400 refused with the field and why. Same capability as the reading forms.
 */
export const POST: RequestHandler = async (event) => {
	const member = await requireMember(event, 'setups.write');
	return queuedReadingPost(event, member);
};
