import { createReadStream } from 'node:fs';
import type { Knex } from 'knex';
import {
	checkProgram,
	checkProgramStream,
	type ProgramCheckResult,
	type ProgramSetup
} from '$lib/offsets';
import { db } from '../db';
import { withShop, type ShopRef } from '../db/tenant';
import { storagePath } from '../setups/photos';
import { setupProblems, type CheckInput } from './input';

/** How often a running background check writes its progress (ms). */
export const PROGRESS_EVERY_MS = 250;
/** A check still "running" this long after it started is taken to have died with its process. */
export const RUNNING_GIVE_UP_MINUTES = 10;

/** The whole text at once (small programs, in the upload request). */
export function checkWhole(text: string, setup: ProgramSetup): ProgramCheckResult {
	return checkProgram(text, setup);
}

/**
 * Streams a stored program through the engine's checker: memory stays flat however long the
 * file is. The file is read a second time only when a subprogram is called before its body
 * (ISO-style subprograms after M30). `onProgress(lines, bytes)` is awaited at most every
 * PROGRESS_EVERY_MS.
 */
export async function checkStream(
	path: string,
	setup: ProgramSetup,
	onProgress: (lines: number, bytes: number) => Promise<void> = async () => {}
): Promise<ProgramCheckResult> {
	let bytes = 0;
	let last = Date.now();
	// The checker reads the stored bytes as they are (no decoding into strings): a character
	// split between pieces is joined by the checker's line splitter.
	async function* read(): AsyncIterable<Uint8Array> {
		bytes = 0;
		for await (const chunk of createReadStream(path, { highWaterMark: 256 * 1024 })) {
			bytes += (chunk as Buffer).length;
			yield chunk as Buffer;
		}
	}
	return checkProgramStream(read, setup, async (lines) => {
		if (Date.now() - last < PROGRESS_EVERY_MS) return;
		last = Date.now();
		await onProgress(lines, bytes);
	});
}

/**
 * Stop and caution findings found (kept or not: a stop is never hidden behind capped
 * cautions). Results stored before stats.severityCounts existed count the kept findings.
 */
export function severityCounts(result: ProgramCheckResult): { stops: number; cautions: number } {
	const counts = result.stats.severityCounts;
	if (counts) return { stops: counts.stop, cautions: counts.caution };
	const stops = result.findings.filter((f) => f.severity === 'stop').length;
	return { stops, cautions: result.findings.length - stops };
}

/** The row fields of a finished check. */
export function doneFields(result: ProgramCheckResult, knex: Knex | Knex.Transaction) {
	return {
		status: 'done',
		result: JSON.stringify(result),
		...severityCounts(result),
		progress_lines: result.stats.lines,
		checked_at: knex.fn.now()
	};
}

interface ClaimedCheck {
	id: number;
	input: CheckInput;
	storageKey: string;
	byteSize: number;
}

/**
 * Takes a queued check for this process (the worker, or a person pressing "check it here"):
 * only one of them gets it. A check left "running" by a process that died is taken again.
 */
async function claim(shop: ShopRef, checkId: number, conn: Knex): Promise<ClaimedCheck | null> {
	return withShop(
		shop,
		async (trx) => {
			const rows = await trx('program_checks')
				.where({ id: checkId })
				.andWhere((q) =>
					q
						.where({ status: 'queued' })
						.orWhere((r) =>
							r
								.where({ status: 'running' })
								.andWhereRaw(`started_at < now() - interval '${RUNNING_GIVE_UP_MINUTES} minutes'`)
						)
				)
				.update({ status: 'running', started_at: trx.fn.now(), note: '' })
				.returning(['id', 'input', 'version_id']);
			if (rows.length === 0) return null;
			const v = await trx('program_versions').where({ id: rows[0].version_id }).first();
			return {
				id: Number(rows[0].id),
				input: rows[0].input as CheckInput,
				storageKey: v.storage_key,
				byteSize: Number(v.byte_size)
			};
		},
		conn
	);
}

export type ProcessOutcome =
	| { status: 'done'; result: ProgramCheckResult }
	| { status: 'failed'; note: string }
	| { status: 'skipped' };

/**
 * Runs one queued check: claims it, streams the stored file through the engine with progress
 * written to the row, stores findings and stats. Idempotent: a check already taken or finished
 * is skipped. Called by the background worker and by the "check it here" action.
 */
export async function runQueuedCheck(
	shop: ShopRef,
	checkId: number,
	conn: Knex = db()
): Promise<ProcessOutcome> {
	const claimed = await claim(shop, checkId, conn);
	if (!claimed) return { status: 'skipped' };
	const update = (fields: Record<string, unknown>) =>
		withShop(shop, (trx) => trx('program_checks').where({ id: claimed.id }).update(fields), conn);
	try {
		const result = await checkStream(
			storagePath(claimed.storageKey),
			claimed.input.programSetup,
			(lines, bytes) => update({ progress_lines: lines, progress_bytes: bytes }).then(() => {})
		);
		await withShop(
			shop,
			(trx) =>
				trx('program_checks')
					.where({ id: claimed.id })
					.update({ ...doneFields(result, trx), progress_bytes: claimed.byteSize }),
			conn
		);
		return { status: 'done', result };
	} catch (e) {
		const note =
			(e as NodeJS.ErrnoException).code === 'ENOENT'
				? 'The stored program file is missing, so it could not be checked. Upload it again.'
				: safeProblems(e);
		await update({ status: 'failed', note, checked_at: conn.fn.now() });
		return { status: 'failed', note };
	}
}

function safeProblems(e: unknown): string {
	try {
		return `The setup could not be used for the check: ${setupProblems(e).join('; ')}`;
	} catch {
		return `The check stopped with an error: ${(e as Error).message ?? 'unknown'}`;
	}
}
