import Negotiator from 'negotiator';
import { preparedFleetBoard } from '$lib/server/fleet/board-json';
import { requireMember } from '$lib/server/guard';
import type { RequestHandler } from './$types';

/**
 * The fleet board as JSON (polled by the board page), gzipped for clients that accept it.
 * Access is checked on every call by the guard; the board itself comes from the board cache,
 * which drops a shop's board on every committed change to what it reads
 * ($lib/server/fleet/board-cache.ts).
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'findings.read');
	const board = await preparedFleetBoard(shop);
	const headers: Record<string, string> = {
		'content-type': 'application/json',
		'cache-control': 'no-store',
		vary: 'Accept-Encoding'
	};
	const negotiator = new Negotiator({
		headers: { 'accept-encoding': event.request.headers.get('accept-encoding') ?? undefined }
	});
	if (negotiator.encoding(['gzip', 'identity']) === 'gzip') {
		return new Response(board.gzip, { headers: { ...headers, 'content-encoding': 'gzip' } });
	}
	return new Response(board.json, { headers });
};
