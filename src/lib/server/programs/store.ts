import { randomUUID } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { mkdir, rm, writeFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import { createInterface } from 'node:readline';
import type { Knex } from 'knex';
import type { ProgramCheckResult } from '$lib/offsets';
import { audit } from '../audit';
import { storagePath } from '../setups/photos';
import type { SetupDetail } from '../setups/queries';
import type { Actor } from '../actor';
import { checksInBackground, checkProgramFile, countLines, programNameFrom } from './file';
import { programSetupFor, type CheckInput } from './input';
import { checkWhole, doneFields } from './run';

/** `trx` below is always a shop transaction (withShop). */

const iso = (v: unknown) => (v ? new Date(v as string).toISOString() : null);

export type CheckStatus = 'queued' | 'running' | 'done' | 'failed';

/** One check as the pages and the JSON API show it. */
export interface CheckView {
	id: number;
	versionId: number;
	status: CheckStatus;
	mode: 'inline' | 'background';
	progress: { lines: number; bytes: number; totalBytes: number; totalLines: number };
	stops: number;
	cautions: number;
	note: string;
	queuedAt: string;
	startedAt: string | null;
	checkedAt: string | null;
}

export interface VersionView {
	id: number;
	version: number;
	originalName: string;
	byteSize: number;
	lineCount: number;
	sha256: string;
	uploadedAt: string;
	uploadedByName: string | null;
	check: CheckView | null;
}

export interface ProgramSummary {
	id: number;
	name: string;
	createdAt: string;
	latest: VersionView | null;
	versionCount: number;
}

function toCheck(r: Record<string, unknown>, v: { byte_size: unknown; line_count: unknown }) {
	return {
		id: Number(r.id),
		versionId: Number(r.version_id),
		status: r.status as CheckStatus,
		mode: r.mode as CheckView['mode'],
		progress: {
			lines: Number(r.progress_lines),
			bytes: Number(r.progress_bytes),
			totalBytes: Number(v.byte_size),
			totalLines: Number(v.line_count)
		},
		stops: Number(r.stops),
		cautions: Number(r.cautions),
		note: String(r.note ?? ''),
		queuedAt: iso(r.queued_at)!,
		startedAt: iso(r.started_at),
		checkedAt: iso(r.checked_at)
	} satisfies CheckView;
}

const CHECK_COLUMNS = [
	'id',
	'version_id',
	'status',
	'mode',
	'progress_lines',
	'progress_bytes',
	'stops',
	'cautions',
	'note',
	'queued_at',
	'started_at',
	'checked_at'
];

/** Versions of a program, newest first, each with its newest check. */
export async function listVersions(
	trx: Knex.Transaction,
	programId: number
): Promise<VersionView[]> {
	const rows = await trx('program_versions as v')
		.leftJoin('public.users as u', 'u.id', 'v.uploaded_by')
		.where('v.program_id', programId)
		.orderBy('v.version', 'desc')
		.select('v.*', 'u.name as uploaded_by_name');
	if (rows.length === 0) return [];
	const checks = await trx('program_checks')
		.whereIn(
			'version_id',
			rows.map((r) => r.id)
		)
		.orderBy('id', 'desc')
		.select(CHECK_COLUMNS);
	return rows.map((v) => {
		const c = checks.find((x) => Number(x.version_id) === Number(v.id));
		return {
			id: Number(v.id),
			version: v.version,
			originalName: v.original_name,
			byteSize: Number(v.byte_size),
			lineCount: Number(v.line_count),
			sha256: v.sha256,
			uploadedAt: iso(v.uploaded_at)!,
			uploadedByName: v.uploaded_by_name ?? null,
			check: c ? toCheck(c, v) : null
		};
	});
}

/** The setup's programs, by name, each with its newest version and that version's check. */
export async function listPrograms(
	trx: Knex.Transaction,
	setupId: number
): Promise<ProgramSummary[]> {
	const programs = await trx('programs').where({ setup_id: setupId }).orderBy('name');
	const out: ProgramSummary[] = [];
	for (const p of programs) {
		const versions = await listVersions(trx, Number(p.id));
		out.push({
			id: Number(p.id),
			name: p.name,
			createdAt: iso(p.created_at)!,
			latest: versions[0] ?? null,
			versionCount: versions.length
		});
	}
	return out;
}

/** A program of this setup, or undefined (also for another setup's or shop's id). */
export async function getProgram(
	trx: Knex.Transaction,
	setupId: number,
	param: string | number | undefined
): Promise<{ id: number; name: string; createdAt: string } | undefined> {
	const id = Number(param);
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const p = await trx('programs').where({ id, setup_id: setupId }).first();
	return p ? { id: Number(p.id), name: p.name, createdAt: iso(p.created_at)! } : undefined;
}

export interface CheckDetail {
	check: CheckView;
	input: CheckInput;
	result: ProgramCheckResult | null;
}

/** One check of this program (with its input and result), or undefined. */
export async function getCheck(
	trx: Knex.Transaction,
	programId: number,
	param: string | number | undefined
): Promise<CheckDetail | undefined> {
	const id = Number(param);
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const r = await trx('program_checks as c')
		.join('program_versions as v', 'v.id', 'c.version_id')
		.where({ 'c.id': id, 'v.program_id': programId })
		.first('c.*', 'v.byte_size', 'v.line_count');
	if (!r) return undefined;
	return {
		check: toCheck(r, r),
		input: r.input as CheckInput,
		result: (r.result as ProgramCheckResult | null) ?? null
	};
}

/** Where a stored version's text is, or undefined when it is not this program's. */
export async function getVersionFile(
	trx: Knex.Transaction,
	programId: number,
	versionId: number
): Promise<{ path: string; lineCount: number; name: string } | undefined> {
	if (!Number.isSafeInteger(versionId) || versionId <= 0) return undefined;
	const v = await trx('program_versions').where({ id: versionId, program_id: programId }).first();
	if (!v) return undefined;
	return {
		path: storagePath(v.storage_key),
		lineCount: Number(v.line_count),
		name: v.original_name
	};
}

/** Lines `from`…`to` (1-based, inclusive) of a stored text, read as a stream (big files stay out of memory). */
export async function readLines(
	path: string,
	from: number,
	to: number,
	maxChars = 400
): Promise<{ n: number; text: string }[]> {
	const out: { n: number; text: string }[] = [];
	const stream = createReadStream(path, { encoding: 'utf8' });
	const lines = createInterface({ input: stream, crlfDelay: Infinity });
	let n = 0;
	try {
		for await (const raw of lines) {
			n++;
			if (n < from) continue;
			if (n > to) break;
			const text = n === 1 ? raw.replace(/^\uFEFF/, '') : raw;
			out.push({ n, text: text.length > maxChars ? `${text.slice(0, maxChars)} …` : text });
		}
	} finally {
		lines.close();
		stream.destroy();
	}
	return out;
}

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
	const { createHash } = await import('node:crypto');
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

/** The text of some lines of a stored file (for findings beside their code), read as a stream. */
export async function readLineSet(
	path: string,
	wanted: number[],
	maxChars = 200
): Promise<Map<number, string>> {
	const out = new Map<number, string>();
	if (wanted.length === 0) return out;
	const want = new Set(wanted);
	const last = Math.max(...wanted);
	const stream = createReadStream(path, { encoding: 'utf8' });
	const lines = createInterface({ input: stream, crlfDelay: Infinity });
	let n = 0;
	try {
		for await (const raw of lines) {
			n++;
			if (want.has(n)) {
				const text = n === 1 ? raw.replace(/^\uFEFF/, '') : raw;
				out.set(n, text.length > maxChars ? `${text.slice(0, maxChars)} …` : text);
			}
			if (n >= last) break;
		}
	} catch {
		// A missing file: the findings show without their code.
	} finally {
		lines.close();
		stream.destroy();
	}
	return out;
}
