/**
 * Program structure: O-number lines, o-word statements and the subprograms kept from the
 * file so calls can be followed (docs/OFFSETS.md §13). Two kinds of subprogram are read:
 * ISO-style `O2000 … M99` after the main program [memory] and RS274NGC-style `o100 sub …
 * o100 endsub` (o-codes as the open-source controller's manual gives them, SOURCES.md #2
 * [memory]). Both are recognised in either dialect: their words cannot mean anything else.
 */
import { copyBytes, findBreak, LineSplitter, programBytes } from './lines';

const decoder = new TextDecoder();
/** text[from, to) as a string (names and words of O lines: a rare, short read). */
const textOf = (text: Uint8Array, from: number, to: number) =>
	decoder.decode(text.subarray(from, to));

/** What an O line is. */
export const OKind = {
	/** `O1234` (or `:1234`) alone: a program or subprogram number. */
	Number: 1,
	Sub: 2,
	EndSub: 3,
	Call: 4,
	Return: 5,
	/** if / else / while / do / repeat / break / continue …: flow not followed. */
	Flow: 6,
	/** An o-word with something after it that is none of the above. */
	Other: 7
} as const;
export type OKind = (typeof OKind)[keyof typeof OKind];

/** An O line read. */
export interface OLine {
	kind: OKind;
	/** "2000" for O2000 / O02000 / o2000, "<name>" for o<Name>. */
	name: string;
}

const FLOW = new Set([
	'if',
	'elseif',
	'else',
	'endif',
	'while',
	'endwhile',
	'do',
	'repeat',
	'endrepeat',
	'break',
	'continue'
]);

/** Index of the first character that is not a space or tab, from `i`. */
function skipBlank(text: Uint8Array, i: number, end: number): number {
	while (i < end) {
		const c = text[i];
		if (c !== 32 && c !== 9) break;
		i++;
	}
	return i;
}

/**
 * Reads a line that starts with an O word (`O1234`, `:1234`, `o100 sub`, `o<part> call`);
 * null for any other line. Cheap for the usual line: one look at its first character.
 */
export function readOLine(text: Uint8Array, start: number, end: number): OLine | null {
	let i = skipBlank(text, start, end);
	if (i >= end) return null;
	const c = text[i];
	if (c !== 79 && c !== 111 && c !== 58) return null;
	i = skipBlank(text, i + 1, end);
	let name: string;
	if (i < end && text[i] === 60) {
		const close = text.indexOf(62, i);
		if (close < 0 || close >= end) return null;
		name = textOf(text, i, close + 1).toLowerCase();
		i = close + 1;
	} else {
		const from = i;
		while (i < end && text[i] >= 48 && text[i] <= 57) i++;
		if (i === from) return null;
		name = String(Number(textOf(text, from, i)));
	}
	i = skipBlank(text, i, end);
	if (i >= end) return { kind: OKind.Number, name };
	const d = text[i];
	if (d === 40 || d === 59) return { kind: OKind.Number, name };
	const from = i;
	while (i < end) {
		const e = text[i] | 32;
		if (e < 97 || e > 122) break;
		i++;
	}
	const word = textOf(text, from, i).toLowerCase();
	if (word === 'sub') return { kind: OKind.Sub, name };
	if (word === 'endsub') return { kind: OKind.EndSub, name };
	if (word === 'call') return { kind: OKind.Call, name };
	if (word === 'return') return { kind: OKind.Return, name };
	if (FLOW.has(word)) return { kind: OKind.Flow, name };
	return { kind: OKind.Other, name };
}

/** A subprogram's body as written: its lines and the physical line number of the first. */
export interface Subprogram {
	/** Line number of lines[0]. */
	first: number;
	lines: Uint8Array[];
	/** `o-number`: ends at an M99 line; `o-sub`: at `oN endsub`. */
	style: 'o-number' | 'o-sub';
}

/** Subprograms of one file by name. */
export type SubprogramLibrary = Map<string, Subprogram>;

/** Most text kept for subprograms (bytes): memory stays flat for any file. */
export const LIBRARY_CAP = 4 * 1024 * 1024;

/**
 * True when text[start, end) holds an M word whose number passes `want` (comments after "(" or
 * ";" are not read). A light look for the structure pass, not the full scanner.
 */
export function hasMWord(
	text: Uint8Array,
	start: number,
	end: number,
	want: (m: number) => boolean
): boolean {
	for (let i = start; i < end - 1; i++) {
		const c = text[i];
		if (c === 40 || c === 59) return false;
		if ((c | 32) !== 109) continue;
		let j = skipBlank(text, i + 1, end);
		let n = 0;
		let digits = 0;
		while (j < end) {
			const d = text[j];
			if (d < 48 || d > 57) break;
			n = n * 10 + (d - 48);
			digits++;
			j++;
		}
		if (digits > 0 && (j >= end || text[j] !== 46) && want(n)) return true;
	}
	return false;
}

const isM99 = (m: number) => m === 99;
/** M2, M30 and M99 end a main program (M99 there returns to its start) [memory]. */
const endsMain = (m: number) => m === 2 || m === 30 || m === 99;

/**
 * Records subprogram bodies while a file is read: an ISO-style O-number line after the main
 * program ended (M30, M2 or M99) opens one (ending at M99); `oN sub` opens one (ending at `oN endsub`).
 * The checker uses the same rules, so a body is never run where it is written.
 */
export class SubprogramRecorder {
	readonly library: SubprogramLibrary = new Map();
	private chars = 0;
	private open: { name: string; sub: Subprogram } | null = null;
	private mainEnded = false;
	/** Some body did not fit under LIBRARY_CAP and was left out. */
	full = false;

	/**
	 * `keepText` false: only tell definitions apart (the library came from a first pass).
	 * `findEnd` false: the caller says when the main program ends (`endMain`), having read the
	 * block's M codes already.
	 */
	constructor(
		private readonly keepText = true,
		private findEnd = true
	) {}

	/** From now on, find the main program's end from the lines themselves (M2, M30, M99). */
	findMainEnd(): void {
		this.findEnd = true;
	}

	/** The main program ended (M2, M30, M99 outside a subprogram). */
	endMain(): void {
		this.mainEnded = true;
	}

	/**
	 * Reads one line (number `lineNo`). Returns true when the line belongs to a subprogram
	 * definition (its opening line, body or closing line).
	 */
	line(text: Uint8Array, start: number, end: number, lineNo: number): boolean {
		if (this.open) {
			const o = this.open;
			if (o.sub.style === 'o-sub') {
				const ol = readOLine(text, start, end);
				if (ol && ol.kind === OKind.EndSub && ol.name === o.name) {
					this.close();
					return true;
				}
			}
			if (this.keepText) this.keep(copyBytes(text, start, end));
			if (o.sub.style === 'o-number' && hasMWord(text, start, end, isM99)) this.close();
			return true;
		}
		// Most lines start with N, G, X…: no O word, nothing to read.
		const c = text[start];
		if (c !== 79 && c !== 111 && c !== 58 && c !== 32 && c !== 9) {
			if (this.findEnd && !this.mainEnded && hasMWord(text, start, end, endsMain))
				this.mainEnded = true;
			return false;
		}
		const ol = readOLine(text, start, end);
		if (ol && ol.kind === OKind.Sub) {
			this.begin(ol.name, lineNo + 1, 'o-sub');
			return true;
		}
		if (ol && ol.kind === OKind.Number && this.mainEnded) {
			this.begin(ol.name, lineNo + 1, 'o-number');
			return true;
		}
		if (this.findEnd && !this.mainEnded && ol === null && hasMWord(text, start, end, endsMain))
			this.mainEnded = true;
		return false;
	}

	/** The definition still open at the end of the file (no M99 / endsub), if any. */
	unclosed(): { name: string; line: number } | null {
		return this.open ? { name: this.open.name, line: this.open.sub.first - 1 } : null;
	}

	/** True inside a definition. */
	get defining(): boolean {
		return this.open !== null;
	}

	private begin(name: string, first: number, style: Subprogram['style']): void {
		this.open = { name, sub: { first, lines: [], style } };
	}

	private keep(line: Uint8Array): void {
		if (!this.open) return;
		this.chars += line.length + 1;
		if (this.chars > LIBRARY_CAP) {
			this.full = true;
			this.open.sub.lines.length = 0;
			return;
		}
		this.open.sub.lines.push(line);
	}

	private close(): void {
		const o = this.open!;
		this.open = null;
		// A body that did not fit is left out: calls to it say its heights are unknown.
		if (this.chars <= LIBRARY_CAP && !this.library.has(o.name)) this.library.set(o.name, o.sub);
	}
}

/**
 * Reads a whole program once for its subprograms, piece by piece (the first of the check's
 * two passes over a stored file).
 */
export function createSubprogramCollector(): {
	push(chunk: string | Uint8Array): void;
	end(): SubprogramLibrary;
} {
	const rec = new SubprogramRecorder();
	let n = 0;
	const split = new LineSplitter({
		lineEnd: findBreak,
		line: (text, start, end) => {
			n++;
			rec.line(text, start, end, n);
		}
	});
	return {
		push: (chunk) => split.push(programBytes(chunk)),
		end: () => {
			split.end();
			return rec.library;
		}
	};
}
