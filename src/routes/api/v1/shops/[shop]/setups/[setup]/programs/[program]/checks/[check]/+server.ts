import { error, json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { programFromParams } from '$lib/server/programs/load';
import { getCheck } from '$lib/server/programs/queries';
import type { RequestHandler } from './$types';

/**
 * One check: status (queued | running | done | failed) with progress while it runs — the program
 * page polls this — and the engine's findings and stats once done.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const detail = await withShop(shop, async (trx) => {
		const { program } = await programFromParams(trx, event.params);
		return getCheck(trx, program.id, event.params.check);
	});
	if (!detail) error(404, 'No such check of this program.');
	return json(
		{ check: { ...detail.check, result: detail.result } },
		{ headers: { 'cache-control': 'no-store' } }
	);
};
