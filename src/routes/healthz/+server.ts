import { json } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { startedChangeFeed } from '$lib/server/db/change-feed';
import { redis } from '$lib/server/redis';
import type { RequestHandler } from './$types';

async function probe(fn: () => Promise<unknown>): Promise<{ ok: boolean; error?: string }> {
	try {
		await Promise.race([
			fn(),
			new Promise((_, reject) => setTimeout(() => reject(new Error('timed out after 2 s')), 2000))
		]);
		return { ok: true };
	} catch (e) {
		// The reason, not the stack: this route is public.
		return { ok: false, error: (e as Error).message.split('\n')[0].slice(0, 200) };
	}
}

/** Readiness for people and monitors: database and Redis reachable. 503 when either is not. */
export const GET: RequestHandler = async () => {
	const [database, redisStatus] = await Promise.all([
		probe(() => db().raw('select 1')),
		probe(() => redis().ping())
	]);
	const ok = database.ok && redisStatus.ok;
	return json(
		{
			status: ok ? 'ok' : 'degraded',
			database,
			redis: redisStatus,
			// This process's change feed: null until a cache first needs it; caches serve only while live.
			changeFeed: startedChangeFeed() ? { live: startedChangeFeed()!.live } : null,
			time: new Date().toISOString()
		},
		{ status: ok ? 200 : 503, headers: { 'cache-control': 'no-store' } }
	);
};
