/**
 * Splits a program fed in pieces into physical lines (LF, CRLF or CR, also across pieces),
 * calling back with each line's bounds in a byte array. The program is read as bytes (UTF-8
 * or plain ASCII, as stored): a word-address program is ASCII, so every byte the scanner acts
 * on is one character, and reading bytes skips decoding the file into a string and the
 * string-representation check V8 makes on every `charCodeAt` (docs/PERFORMANCE.md). Only a
 * line split between pieces is copied; memory stays flat however long the program is.
 */

/** Longest line read as one (bytes); the rest of a longer line is skipped (and reported). */
export const MAX_LINE_CHARS = 64 * 1024;

/** Receives each line: text[start, end), `long` when the line was cut at MAX_LINE_CHARS. */
export interface LineSink {
	line(text: Uint8Array, start: number, end: number, long: boolean): void;
}

const LF = 10;
const CR = 13;

const encoder = new TextEncoder();

/**
 * A piece of program as a plain Uint8Array (text is encoded as UTF-8). A subclass (Node's
 * Buffer) is viewed as a plain array, no copy: the scanner then always sees one kind of
 * array, and V8 keeps one optimised version of it instead of throwing it away on a new kind.
 */
export function programBytes(chunk: string | Uint8Array): Uint8Array {
	if (typeof chunk === 'string') return encoder.encode(chunk);
	return chunk.constructor === Uint8Array
		? chunk
		: new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.byteLength);
}

/** A copy of bytes[start, end) that shares no memory with `bytes` (Buffer#slice would). */
export function copyBytes(bytes: Uint8Array, start: number, end: number): Uint8Array {
	return Uint8Array.prototype.slice.call(bytes, start, end) as Uint8Array;
}

/** Feeds pieces of bytes, calls back per line. */
export class LineSplitter {
	/** The line begun in an earlier piece (reused: the sink never keeps it). */
	private carry = new Uint8Array(256);
	private carryLength = 0;
	private carrying = false;
	private skipping = false;
	private pendingCR = false;
	/** No line given yet: the first may begin with a byte-order mark. */
	private first = true;

	constructor(private readonly sink: LineSink) {}

	/** Feeds the next piece; lines may be split anywhere between pieces. */
	push(chunk: Uint8Array): void {
		let i = 0;
		const n = chunk.length;
		if (this.pendingCR && i < n) {
			if (chunk[i] === LF) i++;
			this.pendingCR = false;
		}
		let start = i;
		if (this.carrying) {
			// Finish the line begun in an earlier piece.
			while (i < n) {
				const c = chunk[i];
				if (c === LF || c === CR) break;
				i++;
			}
			if (i === n) {
				this.extendCarry(chunk, start, n);
				return;
			}
			this.extendCarry(chunk, start, i);
			this.endCarry();
			i = this.afterBreak(chunk, i);
			start = i;
		}
		if (chunk.indexOf(CR, i) < 0) {
			// LF only (the usual case): the engine's native search beats a loop per byte.
			let nl = chunk.indexOf(LF, i);
			while (nl >= 0) {
				this.line(chunk, start, nl);
				start = nl + 1;
				nl = chunk.indexOf(LF, start);
			}
		} else {
			while (i < n) {
				const c = chunk[i];
				if (c !== LF && c !== CR) {
					i++;
					continue;
				}
				this.line(chunk, start, i);
				i = this.afterBreak(chunk, i);
				start = i;
			}
		}
		if (start < n) {
			this.carrying = true;
			this.extendCarry(chunk, start, n);
		}
	}

	/** Reads the last line (one with no break after it). */
	end(): void {
		if (this.carrying) this.endCarry();
	}

	private line(text: Uint8Array, start: number, end: number): void {
		if (this.first) start = this.afterMark(text, start, end);
		if (end - start > MAX_LINE_CHARS) this.sink.line(text, start, start + MAX_LINE_CHARS, true);
		else this.sink.line(text, start, end, false);
	}

	/** Index after the break at `i` (CRLF counts once, also across pieces). */
	private afterBreak(chunk: Uint8Array, i: number): number {
		if (chunk[i] === CR) {
			if (i + 1 < chunk.length) return chunk[i + 1] === LF ? i + 2 : i + 1;
			this.pendingCR = true;
		}
		return i + 1;
	}

	private extendCarry(chunk: Uint8Array, from: number, to: number): void {
		if (this.skipping || from === to) return;
		let take = to - from;
		if (this.carryLength + take > MAX_LINE_CHARS) {
			// A line this long is not a program block; read what fits and skip the rest.
			take = MAX_LINE_CHARS - this.carryLength;
			this.skipping = true;
		}
		const need = this.carryLength + take;
		if (need > this.carry.length) {
			const grown = new Uint8Array(Math.min(MAX_LINE_CHARS, Math.max(need, this.carry.length * 2)));
			grown.set(this.carry.subarray(0, this.carryLength));
			this.carry = grown;
		}
		this.carry.set(chunk.subarray(from, from + take), this.carryLength);
		this.carryLength = need;
	}

	private endCarry(): void {
		const length = this.carryLength;
		const long = this.skipping;
		this.carryLength = 0;
		this.carrying = false;
		this.skipping = false;
		const start = this.first ? this.afterMark(this.carry, 0, length) : 0;
		this.sink.line(this.carry, start, length, long);
	}

	/** Where the first line's text begins: after a UTF-8 byte-order mark (EF BB BF), if any. */
	private afterMark(text: Uint8Array, start: number, end: number): number {
		this.first = false;
		return end - start >= 3 && text[start] === 0xef && text[start + 1] === 0xbb && text[start + 2] === 0xbf
			? start + 3
			: start;
	}
}
