import { createHash, randomUUID } from 'node:crypto';
import { mkdir, rm, writeFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { Knex } from 'knex';
import { audit } from '../audit';
import { afterTransaction } from '../db/after-transaction';
import { storagePath } from '../setups/photos';
import type { SetupDetail } from '../setups/detail';
import type { Actor } from '../actor';
import { checksInBackground, checkProgramFile, countLines, programNameFrom } from './file';
import { programSetupFor, type CheckInput } from './input';
import { checkWhole, doneFields } from './run';

/** Storing program uploads: each a new version on disk and in the database, with its check. */

export type UploadResult =
	| {
			ok: true;
			programId: number;
			versionId: number;
			version: number;
			checkId: number;
			background: boolean;
	  }
	| { ok: false; message: string };

/**
 * Checks the file, then stores it as the next version of the program of that name on the setup
 * (a new program for a new name) with a check: done here for small programs, queued for the
 * background worker for large ones (see checksInBackground). Nothing is kept when anything is
 * refused or fails: rows roll back with the transaction and the file is removed.
 */
export async function uploadProgram(
	trx: Knex.Transaction,
	schemaName: string,
	setup: SetupDetail,
	file: unknown,
	nameField: string,
	actor: Actor,
	now = new Date()
): Promise<UploadResult> {
	const checked = await checkProgramFile(file);
	if (!checked.ok) return checked;
	const built = await programSetupFor(trx, setup, now);
	if (!built.ok) {
		return {
			ok: false,
			message: `"${checked.name}" was not checked: this setup cannot be checked against yet. ${built.reasons.join(' ')}`
		};
	}
	const name = (nameField.trim() || programNameFrom(checked.name)).slice(0, 120);
	return storeVersion(trx, schemaName, setup.id, {
		name,
		originalName: checked.name,
		ext: checked.ext,
		bytes: checked.bytes,
		text: checked.text,
		lines: checked.lines,
		sha256: checked.sha256,
		input: built.input,
		actor
	});
}

async function storeVersion(
	trx: Knex.Transaction,
	schemaName: string,
	setupId: number,
	v: {
		name: string;
		originalName: string;
		ext: string;
		bytes: Uint8Array;
		text: string;
		lines: number;
		sha256: string;
		input: CheckInput;
		actor: Actor;
	}
): Promise<Extract<UploadResult, { ok: true }>> {
	await trx('programs')
		.insert({ setup_id: setupId, name: v.name, created_by: v.actor.id })
		.onConflict(['setup_id', 'name'])
		.ignore();
	// Locks the program row so two uploads under one name get versions 1, 2 (not 2, 2).
	const program = await trx('programs')
		.where({ setup_id: setupId, name: v.name })
		.forUpdate()
		.first();
	const programId = Number(program.id);
	const [{ max }] = await trx('program_versions').where({ program_id: programId }).max({
		max: 'version'
	});
	const version = Number(max ?? 0) + 1;
	const key = `${schemaName}/programs/${programId}/v${version}-${randomUUID()}.${v.ext}`;
	const path = storagePath(key);
	await mkdir(dirname(path), { recursive: true });
	await writeFile(path, v.bytes, { flag: 'wx' });
	// Rolled back later in the caller's transaction: no row points at the file any more.
	afterTransaction(trx, { rolledBack: () => rm(path, { force: true }) });
	try {
		const [row] = await trx('program_versions')
			.insert({
				program_id: programId,
				version,
				storage_key: key,
				original_name: v.originalName,
				byte_size: v.bytes.byteLength,
				line_count: v.lines,
				sha256: v.sha256,
				uploaded_by: v.actor.id
			})
			.returning('id');
		const versionId = Number(row.id);
		const input: CheckInput = {
			...v.input,
			programSetup: { ...v.input.programSetup, programId: `${programId}.${version}` }
		};
		const background = checksInBackground(v.bytes.byteLength, v.lines);
		const base = { version_id: versionId, input: JSON.stringify(input) };
		const [check] = await trx('program_checks')
			.insert(
				background
					? { ...base, mode: 'background', status: 'queued' }
					: {
							...base,
							mode: 'inline',
							started_at: trx.fn.now(),
							progress_bytes: v.bytes.byteLength,
							...doneFields(checkWhole(v.text, input.programSetup), trx)
						}
			)
			.returning('id');
		await audit(trx, {
			actorUserId: v.actor.id,
			actorEmail: v.actor.email,
			action: 'program.upload',
			target: `setup ${setupId}`,
			detail: {
				program: programId,
				name: v.name,
				version,
				bytes: v.bytes.byteLength,
				sha256: v.sha256
			}
		});
		return {
			ok: true,
			programId,
			versionId,
			version,
			checkId: Number(check.id),
			background
		};
	} catch (e) {
		await rm(path, { force: true });
		throw e;
	}
}

/** The demo seed's program (seeds/demo.ts): stored and checked like an upload. */
export async function seedProgram(
	trx: Knex.Transaction,
	setup: SetupDetail,
	program: { name: string; fileName: string; text: string },
	actor: Actor,
	now = new Date()
): Promise<void> {
	const { rows } = await trx.raw('select current_schema() as s');
	const built = await programSetupFor(trx, setup, now);
	if (!built.ok) throw new Error(`demo program ${program.name}: ${built.reasons.join(' ')}`);
	const bytes = new TextEncoder().encode(program.text);
	await storeVersion(trx, rows[0].s, setup.id, {
		name: program.name,
		originalName: program.fileName,
		ext: program.fileName.replace(/^.*\./, ''),
		bytes,
		text: program.text,
		lines: countLines(program.text),
		sha256: createHash('sha256').update(bytes).digest('hex'),
		input: built.input,
		actor
	});
}
