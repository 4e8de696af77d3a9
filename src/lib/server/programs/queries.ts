import type { Knex } from 'knex';
import type { ProgramCheckResult } from '$lib/offsets';
import { isoOrNull as iso } from '../db/convert';
import { storagePath } from '../setups/photos';
import type { CheckInput } from './input';

/** `trx` below is always a shop transaction (withShop). */

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
