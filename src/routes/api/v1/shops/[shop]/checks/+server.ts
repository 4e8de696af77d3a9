import { json } from '@sveltejs/kit';
import type { CheckProgress } from '$lib/fleet';
import { withShop } from '$lib/server/db/tenant';
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
		runs: await trx('check_runs').orderBy('started_at', 'desc').limit(10).select('*'),
		row: jobId ? await trx('check_runs').where({ job_id: jobId }).first() : undefined
	}));
	let job: CheckProgress | null = null;
	if (jobId) {
		const state = !row ? 'waiting' : row.status === 'running' ? 'running' : row.status;
		const progress = state === 'running' ? await jobProgress(jobId, shop.id) : null;
		job = {
			jobId,
			state,
			machinesDone: progress?.done ?? (row?.status === 'done' ? row.machines : 0),
			machinesTotal: progress?.total ?? (row?.status === 'done' ? row.machines : null),
			opened: row?.opened ?? 0,
			stillOpen: row?.still_open ?? 0,
			resolved: row?.resolved ?? 0,
			error: row?.error ?? ''
		};
	}
	return json(
		{
			job,
			runs: runs.map((r) => ({
				jobId: r.job_id,
				trigger: r.trigger,
				status: r.status,
				checkedAt: new Date(r.checked_at).toISOString(),
				finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
				opened: r.opened,
				stillOpen: r.still_open,
				resolved: r.resolved
			}))
		},
		{ headers: { 'cache-control': 'no-store' } }
	);
};
