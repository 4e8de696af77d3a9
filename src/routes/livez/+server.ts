import type { RequestHandler } from './$types';

const BODY = JSON.stringify({ status: 'ok', service: 'datumkeep' });

/**
 * The process answers: a constant JSON, no database, no Redis, no session. For a load
 * balancer deciding whether to restart the process (/healthz says whether it can serve), and
 * the in-app "bare endpoint" the fleet benchmark compares the board API with (bench/fleet.ts).
 */
export const GET: RequestHandler = () =>
	new Response(BODY, {
		headers: { 'content-type': 'application/json', 'cache-control': 'no-store' }
	});
