import type { Knex } from 'knex';
import { db } from '$lib/server/db';
import { runQueuedCheck, type ProcessOutcome } from '$lib/server/programs/run';
import type { ProgramCheckJob } from '$lib/server/queues/program-check';

/**
 * One program-check job: finds the shop's schema and runs the queued check (runQueuedCheck,
 * which the "check it here" action also uses). Idempotent: a check already taken or finished
 * is skipped.
 */
export async function processProgramCheck(
	job: ProgramCheckJob,
	conn: Knex = db()
): Promise<ProcessOutcome> {
	const shop = await conn('public.shops').where({ id: job.shopId }).first('id', 'schema_name');
	if (!shop) return { status: 'skipped' };
	return runQueuedCheck({ id: Number(shop.id), schemaName: shop.schema_name }, job.checkId, conn);
}
