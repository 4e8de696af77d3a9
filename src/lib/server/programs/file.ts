import { createHash } from 'node:crypto';
import { formatBytes } from '$lib/format';

/** Largest program we take (bytes). The production server's BODY_SIZE_LIMIT must be above it. */
export const PROGRAM_MAX_BYTES = 20 * 1024 * 1024;
/** Programs above either of these are checked by the background worker, with progress. */
export const BACKGROUND_MIN_BYTES = 2 * 1024 * 1024;
export const BACKGROUND_MIN_LINES = 50_000;
/** File name endings we take, as CAM post-processors write them (common shop practice). */
export const PROGRAM_EXTENSIONS = ['nc', 'ngc', 'tap', 'txt'] as const;
export type ProgramExtension = (typeof PROGRAM_EXTENSIONS)[number];

/** Lines as the program check counts them: LF, CRLF and a lone CR each end one. */
export function countLines(text: string): number {
	if (text.length === 0) return 0;
	let n = 0;
	for (let i = text.indexOf('\n'); i >= 0; i = text.indexOf('\n', i + 1)) n++;
	if (text.includes('\r')) {
		for (let i = text.indexOf('\r'); i >= 0; i = text.indexOf('\r', i + 1))
			if (text.charCodeAt(i + 1) !== 10) n++;
	}
	const last = text.charCodeAt(text.length - 1);
	return last === 10 || last === 13 ? n : n + 1;
}

/** "O1001 Pump A-B.nc" → "O1001 Pump A-B". */
export function programNameFrom(fileName: string): string {
	const base = fileName.replace(/^.*[\\/]/, '');
	return base.replace(/\.[^.]*$/, '').trim() || base;
}

/** What the file really is, in words, when it is not program text. */
function describeBinary(bytes: Uint8Array): string {
	const head = new TextDecoder('latin1').decode(bytes.slice(0, 8));
	if (head.startsWith('%PDF')) return 'a PDF document';
	if (head.startsWith('PK')) return 'a ZIP archive or Office document';
	if (head.startsWith('\x89PNG')) return 'a PNG image';
	if (bytes[0] === 0xff && bytes[1] === 0xd8) return 'a JPEG image';
	if (head.startsWith('\x7fELF') || head.startsWith('MZ')) return 'a program for a computer';
	if (head.startsWith('\x1f\x8b')) return 'a gzip archive';
	return 'binary data, not text';
}

/** Control characters allowed in program text: tab, LF, VT, FF, CR, DC2/DC4 (tape on/off), SUB (end of file). */
const ALLOWED_CONTROL = new Set([9, 10, 11, 12, 13, 0x12, 0x14, 0x1a]);

export type ProgramFileCheck =
	| {
			ok: true;
			name: string;
			ext: ProgramExtension;
			bytes: Uint8Array;
			text: string;
			lines: number;
			sha256: string;
	  }
	| { ok: false; message: string };

/**
 * Type, size and content checks, with a message naming the file and why. Nothing here writes:
 * a refused file leaves no trace. The text must be ASCII or UTF-8 (what controls and CAM
 * post-processors write); anything else is refused rather than guessed at.
 */
export async function checkProgramFile(file: unknown): Promise<ProgramFileCheck> {
	if (!(file instanceof File) || (file.size === 0 && !file.name)) {
		return {
			ok: false,
			message: `Program: choose a .nc, .ngc, .tap or .txt file to upload (up to ${formatBytes(PROGRAM_MAX_BYTES)}).`
		};
	}
	const name = (file.name || 'the file').slice(0, 200);
	const ext = /\.([^.]+)$/.exec(name)?.[1]?.toLowerCase() ?? '';
	if (!(PROGRAM_EXTENSIONS as readonly string[]).includes(ext)) {
		return {
			ok: false,
			message: `"${name}" was not uploaded: programs must end in .nc, .ngc, .tap or .txt${ext ? ` (this one ends in .${ext})` : ''}.`
		};
	}
	if (file.size === 0) return { ok: false, message: `"${name}" is empty (0 bytes).` };
	if (file.size > PROGRAM_MAX_BYTES) {
		return {
			ok: false,
			message: `"${name}" is ${formatBytes(file.size)}; programs can be ${formatBytes(PROGRAM_MAX_BYTES)} at most. Split it at a tool change and upload the parts.`
		};
	}
	const bytes = new Uint8Array(await file.arrayBuffer());
	if ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff)) {
		return {
			ok: false,
			message: `"${name}" is saved as UTF-16 text. Save it as plain text (ASCII or UTF-8) and upload it again.`
		};
	}
	let control = 0;
	for (let i = 0; i < bytes.length; i++) {
		const b = bytes[i];
		if (b === 0) {
			control = Infinity;
			break;
		}
		if (b < 32 && !ALLOWED_CONTROL.has(b)) control++;
	}
	if (control > 0 && control >= Math.max(1, bytes.length / 1000)) {
		return {
			ok: false,
			message: `"${name}" is ${describeBinary(bytes)}: the program check reads G-code saved as plain text.`
		};
	}
	let text: string;
	try {
		text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
	} catch {
		const loose = new TextDecoder('utf-8').decode(bytes);
		const at = loose.indexOf('\uFFFD');
		const line = at < 0 ? 1 : countLines(loose.slice(0, at + 1));
		return {
			ok: false,
			message: `"${name}" is not ASCII or UTF-8 text (line ${line} has characters in another encoding, such as Windows-1252). Save it as plain text (ASCII or UTF-8) and upload it again.`
		};
	}
	if (text.replace(/^\uFEFF/, '').trim() === '') {
		return { ok: false, message: `"${name}" has no program text in it (only blank lines).` };
	}
	return {
		ok: true,
		name,
		ext: ext as ProgramExtension,
		bytes,
		text,
		lines: countLines(text),
		sha256: createHash('sha256').update(bytes).digest('hex')
	};
}

/** Whether a program of this size is checked by the background worker. */
export function checksInBackground(byteSize: number, lines: number): boolean {
	return byteSize > BACKGROUND_MIN_BYTES || lines > BACKGROUND_MIN_LINES;
}
