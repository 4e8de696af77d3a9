import { describe, expect, it } from 'vitest';
import { checkProgram } from './index';
import { PUMP, program } from './test-data';

/**
 * D numbers (issue 20): a program that calls cutter compensation with G41/G42 D_ uses that D
 * register's radius (NISTIR 6556 cutter radius compensation, from memory; ISO-style controls
 * read D the same way, SOURCES.md 3 for the L12/L13 registers). An unset or stale D is
 * reported like an unset or stale H.
 */
const PROG = program(
	'G20 G17 G40 G80 G90', // 1
	'T1 M6', // 2
	'G54 G0 X-1. Y-1.', // 3
	'G43 H1 Z4.5', // 4
	'G41 D1 G1 X0. F20.', // 5
	'G42 D7 X1.', // 6
	'G40 X2.', // 7
	'G41 D7 X3.', // 8  D7 again: reported once
	'M30' // 9
);
const kinds = (r: ReturnType<typeof checkProgram>) =>
	r.findings
		.filter((f) => f.data?.d !== undefined)
		.map((f) => [f.kind, f.severity, f.data!.d, (f.subject as { line: number }).line]);

describe('program check: D numbers', () => {
	it('reports a D that was never recorded as a Stop, once, and says nothing of a recorded D', () => {
		const r = checkProgram(PROG, { ...PUMP, radius: { '1': 0.25 } });
		expect(kinds(r)).toEqual([['unset', 'stop', '7', 6]]);
		expect(r.findings.find((f) => f.data?.d === '7')!.message).toContain('D7');
	});

	it('repeats a stale D like a stale H (Caution)', () => {
		const r = checkProgram(PROG, {
			...PUMP,
			radius: { '1': 0.25, '7': 0.125 },
			registerStatus: { radius: { '1': 'stale-age' } }
		});
		expect(kinds(r)).toEqual([['stale-age', 'caution', '1', 5]]);
	});

	it('does not check D words when the caller gives no radius registers (older callers)', () => {
		expect(kinds(checkProgram(PROG, PUMP))).toEqual([]);
	});
});
