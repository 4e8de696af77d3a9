/**
 * Reads one line of an RS274/ISO 6983-style word-address program into a Block, byte by byte
 * (the program as stored, UTF-8 or ASCII: every byte outside a comment that is not ASCII is
 * refused): no regular expressions, no substrings, nothing allocated. Word format: a letter,
 * optional spaces, an optional sign and a decimal number (ISO 6983-1 [memory]; NIST RS274NGC
 * v3 (NISTIR 6556) §3.3). Comments are "( … )" to the end of the parenthesis or ";" to the end
 * of the line; "/" first on a line is block delete; "%" marks the start or end of the tape.
 */
import { ABSENT, Block, L, NUMBER, ScanProblem, UNKNOWN, Unmodelled } from './block';
import { findBreak } from './lines';

const POW10: number[] = [];
for (let i = 0; i <= 17; i++) POW10.push(10 ** i);

const SPACE = 32;
const TAB = 9;
const LF = 10;
const CR = 13;

/**
 * Records the line's problem at byte `at`: its column counts characters, not bytes (a UTF-8
 * character before it, e.g. in a comment, is one column), as an editor shows it.
 */
function problem(
	b: Block,
	kind: ScanProblem,
	char: number,
	text: Uint8Array,
	start: number,
	at: number
): number {
	let col = 1;
	for (let k = start; k < at; k++) if ((text[k] & 0xc0) !== 0x80) col++;
	b.problem = kind;
	b.problemChar = char;
	b.problemCol = col;
	return at;
}

/** The character (code point) whose UTF-8 bytes begin at `i`; U+FFFD when they are not UTF-8. */
export function codePointAt(text: Uint8Array, i: number, end: number): number {
	const c = text[i];
	if (c < 0x80) return c;
	const more =
		c >= 0xc2 && c < 0xe0 ? 1 : c >= 0xe0 && c < 0xf0 ? 2 : c >= 0xf0 && c < 0xf5 ? 3 : 0;
	if (more === 0 || i + more >= end) return 0xfffd;
	let cp = c & (0x3f >> more);
	for (let k = 1; k <= more; k++) {
		const d = text[i + k];
		if ((d & 0xc0) !== 0x80) return 0xfffd;
		cp = (cp << 6) | (d & 0x3f);
	}
	return cp;
}

/**
 * After a word the scanner could not follow (a parameter, a macro word), X, Y or Z further
 * on may still move the machine: mark them unknown so no height is trusted on this line.
 * Returns the index of the line's end.
 */
function markRestUnknown(text: Uint8Array, from: number, limit: number, b: Block): number {
	for (let i = from; i < limit; i++) {
		const c = text[i];
		if (c === LF || c === CR) return i;
		const u = c | 32;
		const letter = u - 97;
		if ((letter === L.X || letter === L.Y || letter === L.Z) && b.has[letter] === ABSENT)
			b.mark(letter, UNKNOWN);
	}
	return limit;
}

/**
 * Macro and flow words (ISO-style custom macro B and RS274NGC o-codes [memory]); any other run
 * of letters is a typo the control refuses.
 */
const MACRO_WORDS = new Set([
	'IF',
	'THEN',
	'GOTO',
	'WHILE',
	'DO',
	'END',
	'SUB',
	'ENDSUB',
	'CALL',
	'RETURN',
	'ELSE',
	'ELSEIF',
	'ENDIF',
	'ENDWHILE',
	'REPEAT',
	'ENDREPEAT',
	'BREAK',
	'CONTINUE',
	'POPEN',
	'PCLOS',
	'DPRNT',
	'BPRNT',
	'SETVN',
	'MSG',
	'DEBUG',
	'PRINT',
	'LOG',
	'LOGOPEN',
	'LOGCLOSE'
]);

/** True when text[from, to) (letters, any case) is a macro word; allocates only for runs ≤ 9. */
function isMacroWord(text: Uint8Array, from: number, to: number): boolean {
	if (to - from > 9) return false;
	// "END1", "DO2", "GOTO10": the run stops at the digit already.
	return MACRO_WORDS.has(String.fromCharCode(...text.subarray(from, to)).toUpperCase());
}

/**
 * Reads the line that starts at `start` into `b`, up to its line break (LF or CR) or `limit`,
 * and returns where it ends (the break's index, else `limit`). Finding the end while reading
 * the words visits each byte once: the splitter does not search for the break first. Never
 * throws.
 */
export function scanLine(text: Uint8Array, start: number, limit: number, b: Block): number {
	const stop = scanWords(text, start, limit, b);
	return stop < limit ? findBreak(text, stop, limit) : limit;
}

/** Reads the words from `start`; returns where it stopped (at the break, or earlier). */
function scanWords(text: Uint8Array, start: number, end: number, b: Block): number {
	b.reset();
	let i = start;
	while (i < end) {
		const c = text[i];
		if (c !== SPACE && c !== TAB) break;
		i++;
	}
	if (i < end && text[i] === 47) {
		b.blockDelete = true;
		i++;
	}
	while (i < end) {
		const c = text[i];
		if (c === SPACE || c === TAB) {
			i++;
			continue;
		}
		const letter = (c | 32) - 97;
		if (letter >= 0 && letter < 26 && c >= 65) {
			let j = i + 1;
			let d = j < end ? text[j] : -1;
			while (d === SPACE || d === TAB) d = ++j < end ? text[j] : -1;
			// A letter last on the line: a break stops the number below with no digits read.
			if (j >= end) return problem(b, ScanProblem.NoNumber, c, text, start, i);
			if (d === 35 || d === 91) {
				// "#" or "[": a parameter or expression (NISTIR 6556 §3.3.2); value unknown here.
				b.words++;
				b.unmodelled = Unmodelled.Parameter;
				if (letter !== L.G && letter !== L.M) b.mark(letter, UNKNOWN);
				else b.unknownCode = true;
				return markRestUnknown(text, j, end, b);
			}
			const dl = (d | 32) - 97;
			if (dl >= 0 && dl < 26 && d >= 65 && j === i + 1) {
				// Two letters side by side never form a word: a macro statement (IF, GOTO, WHILE,
				// o100 sub) or a typo the control refuses ("GOO" with the letter O for zero).
				let k = j;
				while (k < end) {
					const e = text[k] | 32;
					if (e < 97 || e > 122) break;
					k++;
				}
				if (isMacroWord(text, i, k)) {
					b.words++;
					b.unmodelled = Unmodelled.MacroWord;
					return markRestUnknown(text, j, end, b);
				}
				const oh = (d | 32) === 111;
				return problem(b, oh ? ScanProblem.LetterO : ScanProblem.Letters, c, text, start, i);
			}
			if (dl === 14 && letter !== L.O) return problem(b, ScanProblem.LetterO, c, text, start, i);
			if (dl >= 0 && dl < 26 && d >= 65) return problem(b, ScanProblem.NoNumber, c, text, start, i);
			let k = j;
			let negative = false;
			if (d === 45) {
				negative = true;
				k++;
			} else if (d === 43) k++;
			// The first 9 digits are summed as whole numbers (exact, and cheaper than doubles);
			// a longer number goes on in doubles. Past 16 digits a double holds no more: further
			// decimals are dropped, further whole digits counted.
			let small = 0;
			let digits = 0;
			let places = 0;
			let extra = 0;
			let e = 0;
			while (k < end && (e = text[k] - 48) >= 0 && e <= 9 && digits < 9) {
				small = small * 10 + e;
				digits++;
				k++;
			}
			let mantissa = small;
			if (digits === 9) {
				while (k < end && (e = text[k] - 48) >= 0 && e <= 9) {
					if (mantissa < 1e16) mantissa = mantissa * 10 + e;
					else extra++;
					digits++;
					k++;
				}
			}
			if (k < end && e === -2) {
				// One "." then the decimals.
				k++;
				while (k < end && (e = text[k] - 48) >= 0 && e <= 9 && digits < 9) {
					small = small * 10 + e;
					places++;
					digits++;
					k++;
				}
				if (places > 0) mantissa = small;
				if (digits >= 9) {
					while (k < end && (e = text[k] - 48) >= 0 && e <= 9) {
						if (mantissa < 1e16) {
							mantissa = mantissa * 10 + e;
							places++;
						}
						digits++;
						k++;
					}
				}
			}
			if (digits === 0) return problem(b, ScanProblem.NoNumber, c, text, start, i);
			let value = places === 0 ? mantissa : mantissa / POW10[places];
			if (extra > 0) {
				value *= 10 ** extra;
				if (!Number.isFinite(value)) return problem(b, ScanProblem.BadNumber, c, text, start, i);
			}
			if (negative) value = -value;
			b.words++;
			if (letter === L.G || letter === L.M) {
				if (!b.addCode(letter, Math.round(value * 10)))
					return problem(b, ScanProblem.TooManyCodes, c, text, start, i);
			} else if (letter !== L.N) {
				// N is a sequence number: it names a block and changes nothing (NISTIR 6556 §3.3).
				if (b.has[letter] !== ABSENT) return problem(b, ScanProblem.Duplicate, c, text, start, i);
				b.mark(letter, NUMBER);
				b.val[letter] = value;
			}
			i = k;
			continue;
		}
		if (c === 40) {
			// Comments do not nest (NISTIR 6556 §3.3.4): the first ")" closes.
			let k = i + 1;
			let nested = -1;
			let e = 0;
			while (k < end && (e = text[k]) !== 41 && e !== LF && e !== CR) {
				if (e === 40 && nested < 0) nested = k;
				k++;
			}
			if (k >= end || e !== 41) return problem(b, ScanProblem.OpenComment, c, text, start, i);
			if (nested >= 0) return problem(b, ScanProblem.NestedComment, 40, text, start, nested);
			i = k + 1;
			continue;
		}
		if (c === 59) return i;
		if (c === 37 && b.words === 0) {
			b.percent = true;
			return i;
		}
		if (c === 35) {
			// "#100 = 2" first on the line sets a parameter and moves nothing; later on a line the
			// rest cannot be trusted.
			b.words++;
			if (b.words === 1) {
				b.unmodelled = Unmodelled.Assign;
				return i;
			}
			b.unmodelled = Unmodelled.Parameter;
			return markRestUnknown(text, i, end, b);
		}
		if (c === 58 && b.words === 0) {
			// ":1234" is a program number on ISO-style controls, like O1234.
			i++;
			while (i < end && text[i] >= 48 && text[i] <= 57) i++;
			b.words++;
			continue;
		}
		if (c === LF || c === CR) return i;
		if (c < 128) {
			const binary = c < 32 || c === 127;
			return problem(b, binary ? ScanProblem.Binary : ScanProblem.BadChar, c, text, start, i);
		}
		// Not ASCII: not program text, except a stray byte-order mark (a stray character).
		const u = codePointAt(text, i, end);
		return problem(b, u === 0xfeff ? ScanProblem.BadChar : ScanProblem.Binary, u, text, start, i);
	}
	return end;
}
