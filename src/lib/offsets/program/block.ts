/**
 * One block (line) of a program as the scanner leaves it: every word in preallocated typed
 * arrays, reused for every line so reading a million lines allocates nothing per line.
 */

/** Letter index: 'A' → 0 … 'Z' → 25. */
export const L = {
	F: 5,
	G: 6,
	H: 7,
	I: 8,
	J: 9,
	K: 10,
	L: 11,
	M: 12,
	N: 13,
	O: 14,
	P: 15,
	Q: 16,
	R: 17,
	T: 19,
	X: 23,
	Y: 24,
	Z: 25
} as const;

/** A word's value state. */
export const ABSENT = 0;
export const NUMBER = 1;
/** Given, but as a parameter or expression (`Z#101`, `Z[#1+2]`): value not known here. */
export const UNKNOWN = 2;

/** Problems the scanner can report for a line; the first one wins. */
export const ScanProblem = {
	None: 0,
	/** A letter with no number after it ("G", "X-"). */
	NoNumber: 1,
	/** A character that cannot start a word ("=", "$", "&"). */
	BadChar: 2,
	/** A "(" comment not closed on its line. */
	OpenComment: 3,
	/** The same letter twice (two X words); G and M may repeat. */
	Duplicate: 4,
	/** Control bytes or bytes outside printable ASCII: not a text program. */
	Binary: 5,
	/** More G or M codes in one block than any control takes. */
	TooManyCodes: 6,
	/** A number too large to be a length or a code. */
	BadNumber: 7,
	/** The letter O where a zero was meant ("GOO", "G0O"): the control refuses the block. */
	LetterO: 8,
	/** Letters side by side that are no macro statement ("JUNK"): the control refuses it. */
	Letters: 9,
	/** A "(" inside a comment: comments do not nest. */
	NestedComment: 10
} as const;
export type ScanProblem = (typeof ScanProblem)[keyof typeof ScanProblem];

/** Things the scanner saw that the check does not model (a caution, not an error). */
export const Unmodelled = {
	None: 0,
	/** `#` parameters (`#100=2`, `Z#5`) or `[...]` expressions. */
	Parameter: 1,
	/** Macro words: IF, WHILE, GOTO, END, DO... */
	MacroWord: 2,
	/** A parameter set on its own (`#100 = 2.`): nothing moves on this line. */
	Assign: 3
} as const;
export type Unmodelled = (typeof Unmodelled)[keyof typeof Unmodelled];

const MAX_CODES = 16;

/** The words of one line. */
export class Block {
	/** ABSENT, NUMBER or UNKNOWN per letter. */
	readonly has = new Uint8Array(26);
	readonly val = new Float64Array(26);
	/** G codes × 10, rounded (G54.1 → 541, G1 → 10). */
	readonly g = new Int32Array(MAX_CODES);
	gCount = 0;
	/** M codes × 10, rounded (M6 → 60). */
	readonly m = new Int32Array(MAX_CODES);
	mCount = 0;
	/** Any word at all (a comment-only or blank line has none). */
	words = 0;
	blockDelete = false;
	/** A `%` line (tape start or end): nothing else on it is read. */
	percent = false;
	problem: ScanProblem = ScanProblem.None;
	/** Character code behind the problem (for BadChar, NoNumber, Duplicate). */
	problemChar = 0;
	/** Column (1-based) of the problem. */
	problemCol = 0;
	unmodelled: Unmodelled = Unmodelled.None;
	/** A G or M code given by a parameter (`G#1`): what the block does is not known. */
	unknownCode = false;

	/** Letters given on this line (so reset clears only those). */
	readonly given = new Uint8Array(26);
	givenCount = 0;

	/** Marks letter `letter` as given with `state` (NUMBER or UNKNOWN). */
	mark(letter: number, state: number): void {
		if (this.has[letter] === ABSENT) this.given[this.givenCount++] = letter;
		this.has[letter] = state;
	}

	/** Clears for the next line. */
	reset(): void {
		for (let i = 0; i < this.givenCount; i++) this.has[this.given[i]] = ABSENT;
		this.givenCount = 0;
		this.gCount = 0;
		this.mCount = 0;
		this.words = 0;
		this.blockDelete = false;
		this.percent = false;
		this.problem = ScanProblem.None;
		this.problemChar = 0;
		this.problemCol = 0;
		this.unmodelled = Unmodelled.None;
		this.unknownCode = false;
	}

	/** Adds a G (or M) code; false when the block already holds the most we keep. */
	addCode(letter: number, code: number): boolean {
		if (letter === L.G) {
			if (this.gCount >= MAX_CODES) return false;
			this.g[this.gCount++] = code;
		} else {
			if (this.mCount >= MAX_CODES) return false;
			this.m[this.mCount++] = code;
		}
		return true;
	}

	/** True when G code `code` (× 10) is in the block. */
	hasG(code: number): boolean {
		for (let i = 0; i < this.gCount; i++) if (this.g[i] === code) return true;
		return false;
	}

	/** True when M code `code` (× 10) is in the block. */
	hasM(code: number): boolean {
		for (let i = 0; i < this.mCount; i++) if (this.m[i] === code) return true;
		return false;
	}
}
