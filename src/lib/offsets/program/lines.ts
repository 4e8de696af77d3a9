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

const LF = 10;
const CR = 13;

/**
 * Receives each line. `lineEnd` is asked first where the line ends (it may read the line on
 * the way: the checker scans its words there, so each byte is visited once); `line` then gets
 * the line's bounds (`long` when it was cut at MAX_LINE_CHARS). Every `line` call follows a
 * `lineEnd` call for the same line.
 */
export interface LineSink {
	/** Index of the first LF or CR in text[start, limit), else `limit`. */
	lineEnd(text: Uint8Array, start: number, limit: number): number;
	line(text: Uint8Array, start: number, end: number, long: boolean): void;
}

/** Index of the first line break (LF or CR) in text[i, limit), else `limit`. */
export function findBreak(text: Uint8Array, i: number, limit: number): number {
	while (i < limit) {
		const c = text[i];
		if (c === LF || c === CR) return i;
		i++;
	}
	return limit;
}

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

/** Index just after the last line break in chunk[from, n) (found from the end), else `from`. */
function afterLastBreak(chunk: Uint8Array, from: number, n: number): number {
	let i = n;
	while (i > from) {
		const c = chunk[i - 1];
		if (c === LF || c === CR) return i;
		i--;
	}
	return from;
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
		if (this.carrying) {
			// Finish the line begun in an earlier piece.
			const at = findBreak(chunk, i, n);
			this.extendCarry(chunk, i, at);
			if (at === n) return;
			this.endCarry();
			i = this.afterBreak(chunk, at);
		}
		if (this.first && i < n) i = this.afterMark(chunk, i, n, false);
		// Lines that end in this piece run up to just after its last break. The rest is carried
		// to the next piece without being read, so no line is read half and then again.
		const whole = afterLastBreak(chunk, i, n);
		if (i < whole) i = this.lines(chunk, i, whole);
		if (i < n) {
			this.carrying = true;
			this.extendCarry(chunk, i, n);
		}
	}

	/**
	 * Gives the lines of chunk[i, whole) (`whole` is just after a break); returns `whole`. A
	 * method of its own so V8's optimised loop (compiled while it runs) ends by returning,
	 * not in code it never ran.
	 */
	private lines(chunk: Uint8Array, i: number, whole: number): number {
		while (i < whole) {
			// A line longer than MAX_LINE_CHARS is not read past the cap (+1 to know it is longer).
			const limit = whole - i > MAX_LINE_CHARS ? i + MAX_LINE_CHARS + 1 : whole;
			const end = this.sink.lineEnd(chunk, i, limit);
			if (end < limit) {
				this.sink.line(chunk, i, end, false);
				i = this.afterBreak(chunk, end);
				continue;
			}
			// Longer than the cap: read what fits, skip to the break (there is one before `whole`).
			this.sink.line(chunk, i, i + MAX_LINE_CHARS, true);
			i = this.afterBreak(chunk, findBreak(chunk, limit, whole));
		}
		return i;
	}

	/** Reads the last line (one with no break after it). */
	end(): void {
		if (this.carrying) this.endCarry();
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
		const start = this.first ? this.afterMark(this.carry, 0, length, true) : 0;
		this.sink.lineEnd(this.carry, start, length);
		this.sink.line(this.carry, start, length, long);
	}

	/**
	 * Where the first line's text begins: after a UTF-8 byte-order mark (EF BB BF), if any.
	 * Undecided while fewer than 3 bytes of a first line not yet `whole` have come.
	 */
	private afterMark(text: Uint8Array, start: number, limit: number, whole: boolean): number {
		if (limit - start < 3 && !whole && findBreak(text, start, limit) === limit) return start;
		this.first = false;
		return limit - start >= 3 &&
			text[start] === 0xef &&
			text[start + 1] === 0xbb &&
			text[start + 2] === 0xbf
			? start + 3
			: start;
	}
}
