import { json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { requireMember } from '$lib/server/guard';
import type { RequestHandler } from './$types';

/** The fleet board as JSON (polled by the board page): a fixed handful of queries per call. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'findings.read');
	const board = await withShop(shop, (trx) => fleetBoard(trx));
	return json(board, { headers: { 'cache-control': 'no-store' } });
};
