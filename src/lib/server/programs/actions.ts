import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { withShop } from '../db/tenant';
import { requireMember } from '../guard';
import { setupFromParam } from '../setups/load';
import { getProgram, uploadProgram } from './store';
import { enqueueProgramCheck } from './queue';
import { recheckVersion } from './recheck';
import { runQueuedCheck } from './run';

/** A short result line for the program forms. */
export const refused = (text: string, status = 400) =>
	fail(status, { upload: { ok: false, text } });

export const QUEUE_UNREACHABLE =
	'The job queue could not be reached, so the background worker has not been told about this check. Check it here instead.';

/**
 * The upload form action (all roles: program checks are everyone's, DESIGN.md §6). On the
 * programs page the name comes from the form (default: the file's name); on a program's page it
 * is that program's, so the file becomes its next version. Redirects to the result.
 */
export async function uploadAction(event: RequestEvent, programParam?: string) {
	const { shop, user } = await requireMember(event, 'setups.write');
	const data = await event.request.formData();
	const nameField = String(data.get('name') ?? '').slice(0, 500);
	const result = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		let name = nameField;
		if (programParam !== undefined) {
			const program = await getProgram(trx, setup.id, programParam);
			if (!program) return { ok: false as const, message: 'No such program on this setup.' };
			name = program.name;
		}
		return uploadProgram(trx, shop.schemaName, setup, data.get('program'), name, user);
	});
	if (!result.ok) return refused(result.message);
	if (result.background) {
		const queued = await enqueueProgramCheck({ shopId: shop.id, checkId: result.checkId });
		if (!queued)
			await withShop(shop, (trx) =>
				trx('program_checks').where({ id: result.checkId }).update({ note: QUEUE_UNREACHABLE })
			);
	}
	redirect(
		303,
		`/shops/${shop.slug}/setups/${event.params.setup}/programs/${result.programId}?version=${result.version}`
	);
}

/**
 * Runs a queued background check in this request: the way through when no worker is running.
 * Whoever claims the check first (this or the worker) runs it; the other does nothing.
 */
export async function runNowAction(event: RequestEvent) {
	const { shop } = await requireMember(event, 'setups.write');
	const data = await event.request.formData();
	const checkId = Number(data.get('checkId'));
	if (!Number.isSafeInteger(checkId) || checkId <= 0)
		return refused('Which check? None was named.');
	const ok = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		const program = await getProgram(trx, setup.id, event.params.program);
		if (!program) return false;
		const row = await trx('program_checks as c')
			.join('program_versions as v', 'v.id', 'c.version_id')
			.where({ 'c.id': checkId, 'v.program_id': program.id })
			.first('c.id');
		return !!row;
	});
	if (!ok) return refused('That check is not one of this program’s.', 404);
	const outcome = await runQueuedCheck(shop, checkId);
	if (outcome.status === 'failed') return refused(outcome.note, 500);
	return {
		upload: {
			ok: true,
			text:
				outcome.status === 'done' ? 'Checked.' : 'Already taken by the background worker or done.'
		}
	};
}

/**
 * Checks a version again in the dialect chosen on the form (ISO-style or RS274NGC-style), then
 * shows that version with its new check.
 */
export async function recheckAction(event: RequestEvent) {
	const { shop, user } = await requireMember(event, 'setups.write');
	const data = await event.request.formData();
	const dialect = String(data.get('dialect') ?? '');
	const versionNo = Number(data.get('version'));
	if (dialect !== 'iso' && dialect !== 'rs274ngc')
		return refused(
			`Dialect "${dialect.slice(0, 40)}" is not one the check knows: iso or rs274ngc.`
		);
	if (!Number.isSafeInteger(versionNo) || versionNo <= 0)
		return refused('Which version? None was named.');
	const result = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		const program = await getProgram(trx, setup.id, event.params.program);
		if (!program) return { ok: false as const, message: 'No such program on this setup.' };
		const v = await trx('program_versions')
			.where({ program_id: program.id, version: versionNo })
			.first('id');
		if (!v) return { ok: false as const, message: 'No such version of this program.' };
		return recheckVersion(trx, program.id, Number(v.id), dialect, user);
	});
	if (!result.ok) return refused(result.message, 404);
	if (result.background) {
		const queued = await enqueueProgramCheck({ shopId: shop.id, checkId: result.checkId });
		if (!queued)
			await withShop(shop, (trx) =>
				trx('program_checks').where({ id: result.checkId }).update({ note: QUEUE_UNREACHABLE })
			);
	}
	redirect(
		303,
		`/shops/${shop.slug}/setups/${event.params.setup}/programs/${event.params.program}?version=${versionNo}`
	);
}
