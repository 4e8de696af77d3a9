import { fleetBoardJson } from '$lib/server/fleet/board-json';
import { requireMember } from '$lib/server/guard';
import type { RequestHandler } from './$types';

/**
 * The fleet board as JSON (polled by the board page). Access is checked against the database on
 * every call; the board itself comes from the board cache, which drops a shop's board on every
 * committed change to what it reads ($lib/server/fleet/board-cache.ts).
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'findings.read');
	const body = await fleetBoardJson(shop);
	return new Response(body, {
		headers: { 'content-type': 'application/json', 'cache-control': 'no-store' }
	});
};
