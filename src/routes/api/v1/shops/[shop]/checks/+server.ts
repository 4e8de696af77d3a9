import { json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { checkProgressOf, findCheckRun, recentCheckRuns } from '$lib/server/fleet/check-runs';
import { requireMember } from '$lib/server/guard';
import { jobProgress } from '$lib/server/queues/shop-checks';
import type { RequestHandler } from './$types';

/**
 * The shop's recent background checks, newest first; with `?job=<id>` also that job's progress
 * (from the shop's own check_runs, so one shop can never read another's jobs).
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'findings.read');
	const jobId = event.url.searchParams.get('job');
	const { runs, row } = await withShop(shop, async (trx) => ({
		runs: await recentCheckRuns(trx),
		row: jobId ? await findCheckRun(trx, jobId) : undefined
	}));
	// The queue's live progress only while the check runs (outside the transaction).
	const job = jobId
		? checkProgressOf(
				jobId,
				row,
				row?.status === 'running' ? await jobProgress(jobId, shop.id) : null
			)
		: null;
	return json({ job, runs }, { headers: { 'cache-control': 'no-store' } });
};
