import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { findingSchema } from '../findings';
import { Block } from './block';
import { checkProgram, createProgramChecker } from './checker';
import { programBytes } from './lines';
import { scanLine } from './scanner';
import { CLEAN, PUMP, program } from './test-data';

/** Physical lines as the checker counts them: LF, CRLF or CR each end one. */
function countLines(text: string): number {
	const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
	if (body.length === 0) return 0;
	const breaks = body.match(/\r\n|\r|\n/g)?.length ?? 0;
	return /[\r\n]$/.test(body) ? breaks : breaks + 1;
}

function assertSound(text: string) {
	const r = checkProgram(text, PUMP);
	expect(r.stats.lines).toBe(countLines(text));
	for (const f of r.findings) {
		expect(findingSchema.safeParse(f).success).toBe(true);
		const line = (f.subject as { line: number }).line;
		expect(line).toBeGreaterThanOrEqual(1);
		expect(line).toBeLessThanOrEqual(Math.max(1, r.stats.lines));
	}
	expect(r.findings.length).toBeLessThanOrEqual(25 * 10);
	return r;
}

const WORDS = [
	'G0',
	'G1',
	'G2',
	'G3',
	'G17',
	'G18',
	'G19',
	'G20',
	'G21',
	'G28',
	'G43',
	'G49',
	'G53',
	'G54',
	'G55',
	'G56',
	'G54.1',
	'G59.1',
	'G80',
	'G81',
	'G83',
	'G90',
	'G91',
	'G92',
	'G98',
	'G99',
	'M6',
	'M30',
	'M98',
	'T1',
	'T2',
	'H0',
	'H1',
	'H2',
	'H99',
	'P2',
	'P0',
	'R0.1',
	'Z',
	'X',
	'#1',
	'#',
	'[',
	']',
	'(',
	')',
	';',
	'/',
	'%',
	'O12',
	'N5',
	'=',
	'IF',
	'GOTO',
	'.',
	'-',
	'Z-',
	'E1e5'
];

describe('never throws (fast-check)', () => {
	test('random bytes, read as latin1 text', () => {
		fc.assert(
			fc.property(fc.uint8Array({ maxLength: 2000 }), (bytes) => {
				assertSound(Buffer.from(bytes).toString('latin1'));
			}),
			{ numRuns: 300 }
		);
	});

	test('random unicode text', () => {
		fc.assert(
			fc.property(fc.string({ unit: 'binary', maxLength: 500 }), (text) => {
				assertSound(text);
			}),
			{ numRuns: 300 }
		);
	});

	test('word soup with numbers, line breaks and comments', () => {
		const token = fc.oneof(
			fc.constantFrom(...WORDS),
			fc.double({ noNaN: false }).map((v) => `Z${v}`),
			fc.integer({ min: -99999, max: 99999 }).map((v) => `X${v / 1000}`),
			fc.constantFrom('\n', '\r\n', '\r', ' ', '\t')
		);
		fc.assert(
			fc.property(fc.array(token, { maxLength: 400 }), (tokens) => {
				assertSound(tokens.join(' '));
			}),
			{ numRuns: 300 }
		);
	});

	test('any split into pieces gives the same result as the whole', () => {
		const text = program(...CLEAN, 'G0 Z0.1', 'G54 X1.', 'G1 X', '#5=1', 'G43 H9 Z1.');
		const whole = checkProgram(text, PUMP);
		fc.assert(
			fc.property(fc.array(fc.nat({ max: text.length }), { maxLength: 12 }), (cuts) => {
				const points = [...new Set([0, ...cuts, text.length])].sort((a, b) => a - b);
				const c = createProgramChecker(PUMP);
				for (let i = 1; i < points.length; i++) c.push(text.slice(points[i - 1], points[i]));
				expect(c.end()).toEqual(whole);
			}),
			{ numRuns: 200 }
		);
	});

	test('bytes cut anywhere (inside a UTF-8 character, between CR and LF, in a byte-order mark) give the same result as the text', () => {
		const text = program(
			'\uFEFF%',
			'O1000 (Ø10 END MILL – 90° CHAMFER)',
			...CLEAN.slice(1),
			'G0 Z0.1 (côté B)',
			'G1 X',
			'G0 X1.é'
		).replace(/\n/g, '\r\n');
		const whole = checkProgram(text, PUMP);
		expect(whole.stats.lines).toBe(countLines(text));
		const bytes = programBytes(text);
		fc.assert(
			fc.property(fc.array(fc.nat({ max: bytes.length }), { maxLength: 12 }), (cuts) => {
				const points = [...new Set([0, ...cuts, bytes.length])].sort((a, b) => a - b);
				const c = createProgramChecker(PUMP);
				for (let i = 1; i < points.length; i++) c.push(bytes.subarray(points[i - 1], points[i]));
				expect(c.end()).toEqual(whole);
			}),
			{ numRuns: 200 }
		);
	});

	test('a line scanned inside the file reads as the same line alone, and ends at its break', () => {
		const token = fc.oneof(
			fc.constantFrom(
				...WORDS,
				'(c)',
				'(open',
				'(a (b) c)',
				';x',
				'#1=2',
				'Z#1',
				'IF',
				'é',
				'%',
				':12'
			),
			fc.integer({ min: -99999, max: 99999 }).map((v) => `X${v / 1000}`)
		);
		fc.assert(
			fc.property(
				fc.array(token, { maxLength: 12 }),
				fc.constantFrom('\n', '\r\n', '\r'),
				fc.constantFrom('G1 X2.', '(next)', ')', '3'),
				(tokens, brk, next) => {
					const line = programBytes(tokens.join(' '));
					const alone = new Block();
					expect(scanLine(line, 0, line.length, alone)).toBe(line.length);
					const file = programBytes(`${tokens.join(' ')}${brk}${next}`);
					const inFile = new Block();
					expect(scanLine(file, 0, file.length, inFile)).toBe(line.length);
					expect(inFile).toEqual(alone);
				}
			),
			{ numRuns: 500 }
		);
	});

	test('non-text input and enormous lines give findings, not exceptions', () => {
		const c = createProgramChecker(PUMP);
		c.push(undefined as unknown as string);
		c.push({ length: 3 } as unknown as string);
		const r = c.end();
		expect(r.findings.map((f) => [f.kind, f.severity])).toEqual([['parse-error', 'stop']]);
		const long = checkProgram(`G0 Z1.\n${'X1.'.repeat(40_000)}\nG0 Z2.\n`, PUMP);
		expect(long.stats.lines).toBe(3);
		expect(long.findings.map((f) => [f.kind, (f.subject as { line: number }).line])).toContainEqual(
			['parse-error', 2]
		);
	});
});
