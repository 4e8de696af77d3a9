import { describe, expect, test } from 'vitest';
import { ABSENT, Block, L, NUMBER, ScanProblem, UNKNOWN, Unmodelled } from './block';
import { programBytes } from './lines';
import { scanLine } from './scanner';

function scan(text: string): Block {
	const b = new Block();
	const bytes = programBytes(text);
	scanLine(bytes, 0, bytes.length, b);
	return b;
}

describe('scanLine: word-address format (ISO 6983-1 [memory]; NISTIR 6556 §3.3)', () => {
	test('letters, signs, decimals, spaces and lower case', () => {
		const b = scan('n10 g1 x-1.5 Y +2. z.25 F 20');
		expect(b.problem).toBe(ScanProblem.None);
		expect([...b.g.slice(0, b.gCount)]).toEqual([10]);
		expect(b.val[L.X]).toBe(-1.5);
		expect(b.val[L.Y]).toBe(2);
		expect(b.val[L.Z]).toBe(0.25);
		expect(b.val[L.F]).toBe(20);
		// N is a sequence number only (NISTIR 6556 §3.3)
		expect(b.has[L.N]).toBe(ABSENT);
		expect(b.words).toBe(6);
	});

	test('G and M codes with a decimal are kept × 10; several per line', () => {
		const b = scan('G54.1 P3 G90 G0 M6 M8');
		expect([...b.g.slice(0, b.gCount)]).toEqual([541, 900, 0]);
		expect([...b.m.slice(0, b.mCount)]).toEqual([60, 80]);
		expect(b.val[L.P]).toBe(3);
	});

	test('comments in parentheses and after ";" are skipped (NISTIR 6556 §3.3.4)', () => {
		const b = scan('G0 (MOVE X9. ; here) Z1. ; X5.');
		expect(b.has[L.X]).toBe(ABSENT);
		expect(b.val[L.Z]).toBe(1);
		expect(scan('(only a comment)').words).toBe(0);
	});

	test('block delete, % and program numbers', () => {
		expect(scan('/G0 Z1.').blockDelete).toBe(true);
		expect(scan('  / G0 Z1.').blockDelete).toBe(true);
		expect(scan('%').percent).toBe(true);
		expect(scan(':1234 (ISO program number)').problem).toBe(ScanProblem.None);
		expect(scan('O1001').val[L.O]).toBe(1001);
	});

	test('parameters, expressions and macro words are unknown values, not errors', () => {
		const p = scan('G1 X1. Z#101 Y2.');
		expect(p.unmodelled).toBe(Unmodelled.Parameter);
		expect(p.has[L.Z]).toBe(UNKNOWN);
		expect(p.has[L.X]).toBe(NUMBER);
		expect(p.has[L.Y]).toBe(UNKNOWN); // after an expression nothing further is trusted
		expect(scan('#100 = 2.').unmodelled).toBe(Unmodelled.Assign);
		expect(scan('Z[#1+2.]').has[L.Z]).toBe(UNKNOWN);
		expect(scan('IF [#1 GT 2] GOTO 5').unmodelled).toBe(Unmodelled.MacroWord);
		expect(scan('o100 sub').unmodelled).toBe(Unmodelled.MacroWord);
		expect(scan('WHILE [#1 LT 5] DO1').unmodelled).toBe(Unmodelled.MacroWord);
		expect(scan('G#1 X1.').unknownCode).toBe(true);
	});

	test('typos the control refuses: letter O for zero, stray letters, nested comments', () => {
		expect(scan('GOO X1.').problem).toBe(ScanProblem.LetterO);
		expect(scan('G0O X1.').problem).toBe(ScanProblem.NoNumber);
		expect(scan('G1 ZO.5').problem).toBe(ScanProblem.LetterO);
		expect(scan('G0 X1. JUNK').problem).toBe(ScanProblem.Letters);
		const nested = scan('G0 X1. (A (B) C)');
		expect(nested.problem).toBe(ScanProblem.NestedComment);
		expect(nested.problemCol).toBe(11);
		expect(scan("'G0 Z-0.5").problem).toBe(ScanProblem.BadChar);
	});

	test('problems carry the character and its column', () => {
		const cases: [string, number, string, number][] = [
			['G1 X', ScanProblem.NoNumber, 'X', 4],
			['G1 X F20.', ScanProblem.NoNumber, 'X', 4],
			['G1 X-. Y1.', ScanProblem.NoNumber, 'X', 4],
			['G0 X1. (open', ScanProblem.OpenComment, '(', 8],
			['G0 X1. X2.', ScanProblem.Duplicate, 'X', 8],
			['G0 X1. = 2', ScanProblem.BadChar, '=', 8],
			['G0\u0000X1.', ScanProblem.Binary, '\u0000', 3],
			['G0 X1.é', ScanProblem.Binary, 'é', 7],
			// Columns count characters, not UTF-8 bytes: "ø" and "°" in the comment are one each.
			['G0 (Ø10 MILL 90°) X1. = 2', ScanProblem.BadChar, '=', 23],
			['G0 X1.\uFEFF', ScanProblem.BadChar, '\uFEFF', 7]
		];
		for (const [text, kind, char, col] of cases) {
			const b = scan(text);
			expect([b.problem, String.fromCharCode(b.problemChar), b.problemCol], text).toEqual([
				kind,
				char,
				col
			]);
		}
	});

	test('a character outside the BMP and bytes that are not UTF-8 are named, not misread', () => {
		const wrench = scan('G0 X1.\u{1F527}');
		expect([wrench.problem, wrench.problemChar, wrench.problemCol]).toEqual([
			ScanProblem.Binary,
			0x1f527,
			7
		]);
		// A Windows-1252 "°" (one byte B0) inside no comment: not UTF-8, named as U+FFFD.
		const b = new Block();
		const raw = Uint8Array.from([0x58, 0x31, 0x20, 0xb0]);
		scanLine(raw, 0, raw.length, b);
		expect([b.problem, b.problemChar, b.problemCol]).toEqual([ScanProblem.Binary, 0xfffd, 4]);
		// A UTF-8 character cut off by the line's end.
		const cut = Uint8Array.from([0x58, 0x31, 0xc3]);
		scanLine(cut, 0, cut.length, b);
		expect([b.problem, b.problemChar, b.problemCol]).toEqual([ScanProblem.Binary, 0xfffd, 3]);
	});

	test('a huge number is refused rather than read as Infinity', () => {
		expect(scan(`X${'9'.repeat(400)}`).problem).toBe(ScanProblem.BadNumber);
		expect(scan(`X${'1'.repeat(20)}`).val[L.X] / 1.1111111111111111e19).toBeCloseTo(1, 12);
		expect(scan(`X1.${'0'.repeat(400)}1`).val[L.X]).toBe(1);
	});

	test('reads only [start, end) of a longer string and resets between lines', () => {
		const text = programBytes('G0 X1.\nG1 Z-2.');
		const b = new Block();
		scanLine(text, 7, text.length, b);
		expect(b.has[L.X]).toBe(ABSENT);
		expect(b.val[L.Z]).toBe(-2);
		scanLine(text, 0, 6, b);
		expect(b.has[L.Z]).toBe(ABSENT);
		expect(b.val[L.X]).toBe(1);
	});
});
