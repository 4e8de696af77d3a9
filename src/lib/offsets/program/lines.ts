/**
 * Splits a program fed in pieces into physical lines (LF, CRLF or CR, also across pieces; a
 * leading byte-order mark skipped), calling back with each line's bounds in a string. Only a
 * line split between pieces is copied; memory stays flat however long the program is.
 */

/** Longest line read as one; the rest of a longer line is skipped (and reported). */
export const MAX_LINE_CHARS = 64 * 1024;

/** Receives each line: text[start, end), `long` when the line was cut at MAX_LINE_CHARS. */
export interface LineSink {
	line(text: string, start: number, end: number, long: boolean): void;
}

/** Feeds pieces of text, calls back per line. */
export class LineSplitter {
	private carry = '';
	private skipping = false;
	private pendingCR = false;
	private started = false;

	constructor(private readonly sink: LineSink) {}

	/** Feeds the next piece; lines may be split anywhere between pieces. */
	push(chunk: string): void {
		let i = 0;
		const n = chunk.length;
		if (!this.started && n > 0) {
			this.started = true;
			if (chunk.charCodeAt(0) === 0xfeff) i = 1; // byte-order mark
		}
		if (this.pendingCR && i < n) {
			if (chunk.charCodeAt(i) === 10) i++;
			this.pendingCR = false;
		}
		let start = i;
		if (this.carry !== '' || this.skipping) {
			// Finish the line begun in an earlier piece.
			while (i < n) {
				const c = chunk.charCodeAt(i);
				if (c === 10 || c === 13) break;
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
		if (chunk.indexOf('\r', i) < 0) {
			// LF only (the usual case): the engine's native search beats a loop per character.
			let nl = chunk.indexOf('\n', i);
			while (nl >= 0) {
				this.line(chunk, start, nl);
				start = nl + 1;
				nl = chunk.indexOf('\n', start);
			}
		} else {
			while (i < n) {
				const c = chunk.charCodeAt(i);
				if (c !== 10 && c !== 13) {
					i++;
					continue;
				}
				this.line(chunk, start, i);
				i = this.afterBreak(chunk, i);
				start = i;
			}
		}
		if (start < n) this.extendCarry(chunk, start, n);
	}

	/** Reads the last line (one with no break after it). */
	end(): void {
		if (this.carry !== '' || this.skipping) this.endCarry();
	}

	private line(text: string, start: number, end: number): void {
		if (end - start > MAX_LINE_CHARS) this.sink.line(text, start, start + MAX_LINE_CHARS, true);
		else this.sink.line(text, start, end, false);
	}

	/** Index after the break at `i` (CRLF counts once, also across pieces). */
	private afterBreak(chunk: string, i: number): number {
		if (chunk.charCodeAt(i) === 13) {
			if (i + 1 < chunk.length) return chunk.charCodeAt(i + 1) === 10 ? i + 2 : i + 1;
			this.pendingCR = true;
		}
		return i + 1;
	}

	private extendCarry(chunk: string, from: number, to: number): void {
		if (this.skipping || from === to) return;
		if (this.carry.length + (to - from) > MAX_LINE_CHARS) {
			// A line this long is not a program block; read what fits and skip the rest.
			this.carry += chunk.slice(from, from + (MAX_LINE_CHARS - this.carry.length));
			this.skipping = true;
			return;
		}
		this.carry += chunk.slice(from, to);
	}

	private endCarry(): void {
		const text = this.carry;
		const long = this.skipping;
		this.carry = '';
		this.skipping = false;
		this.sink.line(text, 0, text.length, long);
	}
}
