import type { Knex } from 'knex';
import type { Dialect } from '$lib/offsets';
import { audit } from '../audit';
import type { Actor } from '../setups/write';
import { checksInBackground } from './file';
import type { CheckInput } from './input';
import { checkStream, doneFields } from './run';
import { getVersionFile } from './store';

export type RecheckResult =
	{ ok: true; checkId: number; background: boolean } | { ok: false; message: string };

/**
 * Checks a stored version again in another dialect (docs/OFFSETS.md §13), against the same
 * setup state its last check used, so only the dialect differs. A new check row: the old one
 * stays. Small programs are checked here; large ones are queued like an upload.
 */
export async function recheckVersion(
	trx: Knex.Transaction,
	programId: number,
	versionId: number,
	dialect: Dialect,
	actor: Actor
): Promise<RecheckResult> {
	const file = await getVersionFile(trx, programId, versionId);
	if (!file) return { ok: false, message: 'No such version of this program.' };
	const last = await trx('program_checks')
		.where({ version_id: versionId })
		.orderBy('id', 'desc')
		.first('input');
	if (!last) return { ok: false, message: 'This version has no check to repeat yet.' };
	const before = last.input as CheckInput;
	const input: CheckInput = {
		...before,
		programSetup: { ...before.programSetup, dialect, profile: true }
	};
	const v = await trx('program_versions').where({ id: versionId }).first('byte_size');
	const bytes = Number(v.byte_size);
	const background = checksInBackground(bytes, file.lineCount);
	const base = { version_id: versionId, input: JSON.stringify(input) };
	const row = background
		? { ...base, mode: 'background', status: 'queued' }
		: {
				...base,
				mode: 'inline',
				started_at: trx.fn.now(),
				progress_bytes: bytes,
				...doneFields(await checkStream(file.path, input.programSetup), trx)
			};
	const [check] = await trx('program_checks').insert(row).returning('id');
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'program.recheck',
		target: `program ${programId}`,
		detail: { version: versionId, dialect }
	});
	return { ok: true, checkId: Number(check.id), background };
}
