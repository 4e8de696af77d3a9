import { describe, expect, test } from 'vitest';
import { convertTable } from '../convert';
import { findingSchema } from '../findings';
import type { OffsetTable } from '../types';
import { checkProgram, createProgramChecker } from './checker';
import type { ProgramSetup } from './schema';
import { CLEAN, PUMP, program } from './test-data';

/** [kind, line, severity] of each finding, in line order. */
function found(text: string, setup: ProgramSetup = PUMP) {
	return checkProgram(text, setup)
		.findings.map((f) => [
			f.kind,
			f.subject.type === 'program-line' ? f.subject.line : 0,
			f.severity
		])
		.sort((a, b) => (a[1] as number) - (b[1] as number));
}

const withLine = (lines: string[], index: number, text: string) =>
	lines.map((l, i) => (i === index - 1 ? text : l));

describe('a clean program', () => {
	test('two fixtures with proper retracts: no finding', () => {
		const r = checkProgram(program(...CLEAN), PUMP);
		expect(r.findings).toEqual([]);
		expect(r.stats.lines).toBe(17);
		expect(r.stats.workOffsets).toEqual(['G54', 'G55']);
		expect(r.stats.tools).toEqual(['1']);
		expect(r.stats.units).toEqual({ machine: 'inch', program: 'inch' });
		// Clearance planes from clearancePlanes (DESIGN.md §4): 4.5 + 1 − h_k.
		expect(r.stats.clearancePlanes).toEqual({ G54: 4.25, G55: 1 });
		expect(r.stats.clearanceHeight).toBe(5.5);
	});

	test('tip heights above the reference: program Z + h_k (reference-touch, H matches T)', () => {
		// NIST RS274NGC v3 (NISTIR 6556) composition: spindle Z = program Z + W + H; tip above
		// the reference = spindle Z − (R + L) = program Z + W (W = h_k in reference-touch).
		const r = checkProgram(program(...CLEAN), PUMP);
		// lowest: G54 Z-0.25 → 1.0; highest: after M6 at machine Z 0 → 0 − (−15) = 15.
		expect(r.stats.tipZRange).toEqual({ '1': { min: 1, max: 15 } });
		expect(r.stats.moves).toBe(11);
	});
});

describe('low-traverse', () => {
	test('rapid between fixtures below the clearance plane stops at that line', () => {
		// Common shop practice: retract clear in Z before moving between fixtures.
		const text = program(...withLine(CLEAN, 10, 'G0 Z0.1'));
		expect(found(text)).toEqual([['low-traverse', 11, 'stop']]);
		const f = checkProgram(text, PUMP).findings[0];
		expect(f.message).toMatch(/G55.*1\.3500 in.*5\.5000 in.*G54's clearance plane is Z 4\.2500 in/);
		expect(f.data).toEqual({ from: 'G54', to: 'G55', clearanceHeight: 5.5, tipHeight: 1.35 });
	});

	test('a retract that is not high enough is still caught; exactly at the plane is clear', () => {
		expect(found(program(...withLine(CLEAN, 10, 'G0 Z4.2')))).toEqual([
			['low-traverse', 11, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 10, 'G0 Z4.25')))).toEqual([]);
	});

	test('sideways and down in one rapid is a caution; sideways below the part top too', () => {
		const diag = withLine(CLEAN, 12, 'G0 X11. Z0.1');
		expect(found(program(...diag))).toEqual([['low-traverse', 12, 'caution']]);
		const deep = [...CLEAN.slice(0, 8), 'G0 X3.', ...CLEAN.slice(9)];
		expect(found(program(...deep))).toEqual([['low-traverse', 9, 'caution']]);
	});

	test('a drilling cycle with G99 stays at R; moving on to the next fixture is caught', () => {
		// NISTIR 6556 §3.5.16–3.5.20: G99 returns to R, G98 to the height before the cycle.
		const cyc = (mode: string) => [
			...CLEAN.slice(0, 6), // … G43 H1 Z4.5 (line 6)
			`${mode} G81 X1.5 Y1. Z-0.5 R0.1 F10.`, // 7
			'X2.5', // 8
			'G80', // 9
			'G55 G0 X10. Y1.', // 10
			'M30'
		];
		expect(found(program(...cyc('G99')))).toEqual([['low-traverse', 10, 'stop']]);
		// G98 returns to Z4.5 (where the cycle began: tip 5.75), so the move is clear.
		const r = checkProgram(program(...cyc('G98')), PUMP);
		expect(r.findings).toEqual([]);
		expect(r.stats.tipZRange['1'].min).toBe(0.75); // Z-0.5 + 1.25
	});
});

describe('no-length-comp', () => {
	test('Z move after a tool change with no new G43 H', () => {
		const lines = [
			...CLEAN.slice(0, 10), // T1 … G0 Z4.5 (line 10)
			'T2 M6', // 11
			'G0 X2. Y2.', // 12
			'Z0.1', // 13: G43 H1 is still in force, but nothing was taken up for T2
			'M30'
		];
		// H1 is still applied to T2 (0.5 in shorter: H2 − H1), so the rapid to Z0.1 puts T2's
		// tip at 0.1 + 1.25 − 0.5 = 0.85, below the part top (1.25): into the part as well.
		expect(found(program(...lines))).toEqual([
			['no-length-comp', 13, 'stop'],
			['rapid-into-part', 13, 'stop']
		]);
		expect(checkProgram(program(...lines), PUMP).findings[0].message).toMatch(/T2 \(line 11\)/);
	});

	test('Z move with no G43 at all (NISTIR 6556 §2.1.2.3: the gauge line is controlled)', () => {
		// Gauge-length table (R = −18), so the moves stay inside travel. With no offset the tip
		// really runs 3 in (the tool's length) lower, so the move to G55 is low as well.
		const gauge = convertTable(PUMP.table as OffsetTable, 'gauge-length', {
			referenceGaugeLineZ: -18
		});
		const setup = { ...PUMP, table: gauge, geometry: { referenceGaugeLineZ: -18 } };
		// The real tip runs 3 in low: the rapid to Z0.1 at line 7 ends inside the part, and
		// the one at line 12 (from inside G54's part height) too.
		const lines = withLine(CLEAN, 6, 'G0 Z4.5');
		expect(found(program(...lines), setup)).toEqual([
			['no-length-comp', 6, 'stop'],
			['rapid-into-part', 7, 'stop'],
			['low-traverse', 11, 'stop'],
			['rapid-into-part', 12, 'caution']
		]);
	});

	test('G43 H0 is no offset (NISTIR 6556 §3.5.11)', () => {
		const gauge = convertTable(PUMP.table as OffsetTable, 'gauge-length', {
			referenceGaugeLineZ: -18
		});
		const setup = { ...PUMP, table: gauge, geometry: { referenceGaugeLineZ: -18 } };
		expect(found(program(...withLine(CLEAN, 6, 'G43 H0 Z4.5')), setup)).toEqual([
			['no-length-comp', 6, 'stop'],
			['rapid-into-part', 7, 'stop'],
			['low-traverse', 11, 'stop'],
			['rapid-into-part', 12, 'caution']
		]);
	});
});

describe('units-mismatch', () => {
	test('a metric program (G21) on an inch machine stops at the G21 line', () => {
		// The same program in mm (1 in = 25.4 mm exactly, NIST SP 811) so nothing else fires.
		const mm = [
			'%',
			'G21 G17 G40 G80 G90', // 2
			'T1 M6',
			'G54 G0 X25.4 Y25.4',
			'G43 H1 Z114.3',
			'G1 Z-6.35 F500.',
			'G0 Z114.3',
			'G55 X254. Y25.4',
			'M30'
		];
		expect(found(program(...mm))).toEqual([['units-mismatch', 2, 'stop']]);
		const r = checkProgram(program(...mm), PUMP);
		expect(r.stats.units.program).toBe('mm');
		expect(r.stats.tipZRange['1'].min).toBe(1); // −6.35 mm = −0.25 in, + 1.25
	});

	test('no G20/G21 before the first move is a caution there', () => {
		expect(found(program(...withLine(CLEAN, 3, 'G17 G40 G80 G90')))).toEqual([
			['units-mismatch', 5, 'caution']
		]);
	});
});

describe('unknown offsets', () => {
	test('a work offset missing from the table stops; one outside the setup is a caution', () => {
		expect(found(program(...withLine(CLEAN, 11, 'G56 X10. Y1.')))).toEqual([
			['unknown-work-offset', 11, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 11, 'G57 X10. Y1.')))).toEqual([
			['unknown-work-offset', 11, 'caution']
		]);
		expect(found(program(...withLine(CLEAN, 11, 'G59.1 X10. Y1.')))).toEqual([
			['unknown-work-offset', 11, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 11, 'G54.1 X10. Y1.')))).toEqual([
			['unknown-work-offset', 11, 'stop']
		]);
	});

	test('G54.1 Pn is read as an extended work offset', () => {
		const setup = {
			...PUMP,
			table: { ...PUMP.table, work: { ...PUMP.table.work, 'G54.1 P2': 4.5 } },
			setup: {
				...PUMP.setup,
				fixtures: [PUMP.setup.fixtures[0], { register: 'G54.1 P2', zeroHeight: 4.5 }]
			}
		};
		const r = checkProgram(program(...withLine(CLEAN, 11, 'G54.1 P2 X10. Y1.')), setup);
		expect(r.findings).toEqual([]);
		expect(r.stats.workOffsets).toEqual(['G54', 'G54.1 P2']);
	});

	test('an H number missing from the table stops; G43 with no H and no H before stops', () => {
		expect(found(program(...withLine(CLEAN, 6, 'G43 H7 Z4.5')))).toEqual([
			['unknown-tool-offset', 6, 'stop']
		]);
		// ISO-style: G43 without H keeps the H in force; none was given yet (dialect.ts).
		const iso = { ...PUMP, dialect: 'iso' as const };
		expect(found(program(...withLine(CLEAN, 6, 'G43 Z4.5')), iso)).toEqual([
			['unknown-tool-offset', 6, 'stop']
		]);
		// RS274NGC-style: the loaded tool's entry (T1 → H1): nothing wrong.
		const ngc = { ...PUMP, dialect: 'rs274ngc' as const };
		expect(found(program(...withLine(CLEAN, 6, 'G43 Z4.5')), ngc)).toEqual([]);
	});

	test('another tool’s H is a caution while the tip stays above the clearance height', () => {
		// T1 with H2 (0.5 in longer offset): tip at 4.5 + 1.25 + 0.5 = 6.25 ≥ 5.5.
		const r = found(program(...CLEAN.slice(0, 5), 'G43 H2 Z4.5', 'M30'));
		expect(r).toEqual([['unknown-tool-offset', 6, 'caution']]);
	});
});

describe('overtravel', () => {
	test('above the top of travel (Z home is 0): spindle Z = program Z + W + H', () => {
		// NISTIR 6556 composition: 16 + 1.25 + (−15) = 2.25 > 0 (common shop practice: Z home 0).
		const text = program(...withLine(CLEAN, 6, 'G43 H1 Z16.'));
		expect(found(text)).toEqual([['overtravel', 6, 'stop']]);
		expect(checkProgram(text, PUMP).findings[0].data).toEqual({ machineZ: 2.25 });
	});

	test('below the bottom of travel (−20)', () => {
		// −6 + 1.25 − 15 = −19.75 is inside; −6 in G55: −6 + 4.5 − 15 = −16.5 inside; −12 in G55 = −22.5.
		expect(found(program(...withLine(CLEAN, 13, 'G1 Z-12. F20.')))).toEqual([
			['overtravel', 13, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 8, 'G1 Z-6. F20.')))).toEqual([]);
	});

	test('G53 Z is machine Z; G53 Z1. is above the top', () => {
		expect(found(program(...withLine(CLEAN, 15, 'G53 G0 Z1.')))).toEqual([
			['overtravel', 15, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 15, 'G53 G0 Z0.')))).toEqual([]);
	});
});

describe('parse-error', () => {
	test('a word with no number stops at its line; the control refuses the block', () => {
		expect(found(program(...withLine(CLEAN, 9, 'G1 X F20.')))).toEqual([
			['parse-error', 9, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 9, 'X2. (unclosed')))).toEqual([
			['parse-error', 9, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 9, 'X2. X3.')))).toEqual([['parse-error', 9, 'stop']]);
	});

	test('macros, external subprograms and G65 make one heights-unknown span; G10 a caution', () => {
		// Line 9 loses the heights; line 10 (G0 Z4.5, absolute) picks them up again.
		for (const line of ['IF [#1 GT 2] GOTO 5', 'M98 P1000', 'G65 P9000 A1.']) {
			const r = checkProgram(program(...withLine(CLEAN, 9, line)), PUMP);
			expect(
				r.findings.map((f) => [f.kind, f.severity, f.data]),
				line
			).toEqual([['heights-unknown', 'caution', { from: 9, until: 10 }]]);
		}
		expect(found(program(...withLine(CLEAN, 9, 'G10 L2 P1 Z1.')))).toEqual([
			['parse-error', 9, 'caution']
		]);
		// Setting a parameter moves nothing: no finding.
		expect(found(program(...withLine(CLEAN, 9, '#100 = 2.')))).toEqual([]);
	});

	test('a Z from a parameter makes the height unknown, so no later height is guessed', () => {
		const lines = withLine(withLine(CLEAN, 10, 'G0 Z#101'), 14, 'G0 Z#102');
		const r = checkProgram(program(...lines), PUMP);
		expect(r.findings.map((f) => [f.kind, f.severity, f.data])).toEqual([
			['heights-unknown', 'caution', { from: 10, until: 12 }],
			['heights-unknown', 'caution', { from: 14, until: 15 }] // G28 Z: home is known
		]);
		expect(r.stats.unknownSpans).toEqual([
			[10, 12],
			[14, 15]
		]);
	});

	test('binary bytes give a stop naming the byte', () => {
		const r = checkProgram(program(...withLine(CLEAN, 9, 'X2.\u0001')), PUMP);
		expect(r.findings.map((f) => f.kind)).toEqual(['parse-error']);
		expect(r.findings[0].message).toMatch(/code 01 \(hex\)/);
	});
});

describe('stale and unset registers from the setup', () => {
	test('each is reported once, at the line that first uses it', () => {
		const setup: ProgramSetup = {
			...PUMP,
			registerStatus: { work: { G55: 'stale-age' }, tools: { '1': ['unset', 'stale-reference'] } }
		};
		expect(found(program(...CLEAN), setup)).toEqual([
			['unset', 6, 'stop'],
			['stale-reference', 6, 'caution'],
			['stale-age', 11, 'caution']
		]);
	});
});

describe('conventions', () => {
	test('the same setup in all three conventions gives the same findings and tip heights', () => {
		// DESIGN.md §2 invariant: W_k + H_i = R + h_k + L_i in every convention.
		const R = -18;
		const bad = program(...withLine(CLEAN, 10, 'G0 Z0.1'));
		const ref = checkProgram(bad, PUMP);
		const gauge = convertTable(PUMP.table as OffsetTable, 'gauge-length', {
			referenceGaugeLineZ: R
		});
		const master = convertTable(PUMP.table as OffsetTable, 'master-tool', { masterTool: '1' });
		for (const setup of [
			{ ...PUMP, table: gauge, geometry: { referenceGaugeLineZ: R } },
			{ ...PUMP, table: gauge }, // no R: placed from the fixtures' zero heights
			{ ...PUMP, table: master, geometry: { masterTouchZ: -15 } },
			{ ...PUMP, table: master }
		]) {
			const r = checkProgram(bad, setup);
			expect(r.findings.map((f) => [f.kind, f.key])).toEqual(
				ref.findings.map((f) => [f.kind, f.key])
			);
			expect(r.stats.tipZRange).toEqual(ref.stats.tipZRange);
		}
	});
});

describe('line numbers and framing', () => {
	test('CRLF, CR, blank lines, comments, block delete and N words keep line numbers right', () => {
		const lines = withLine(CLEAN, 10, 'N100 G0 Z0.1 (too low) ; still too low');
		for (const eol of ['\n', '\r\n', '\r']) {
			const text = ['', '(setup note)', ...lines.map((l, i) => (i === 4 ? `/${l}` : l))].join(eol);
			const r = checkProgram(text, PUMP);
			expect(r.stats.lines, JSON.stringify(eol)).toBe(CLEAN.length + 2);
			expect(
				r.findings.map((f) => f.subject),
				JSON.stringify(eol)
			).toEqual([{ type: 'program-line', line: 13 }]);
		}
	});

	test('programId goes into the subject and the key', () => {
		const r = checkProgram(program(...withLine(CLEAN, 10, 'G0 Z0.1')), {
			...PUMP,
			programId: 'p7'
		});
		expect(r.findings[0].key).toBe('low-traverse|program:p7:line:11');
		expect(findingSchema.parse(r.findings[0])).toEqual(r.findings[0]);
	});

	test('cautions are capped per kind and the rest counted', () => {
		const text = program(
			...CLEAN.slice(0, 5),
			...Array.from({ length: 300 }, () => 'G10 L2 P1 Z1.')
		);
		const r = checkProgram(text, { ...PUMP, maxFindingsPerKind: 10 });
		expect(r.findings).toHaveLength(10);
		expect(r.stats.findingCounts['parse-error']).toBe(300);
		expect(r.stats.suppressed).toBe(290);
		expect(r.stats.severityCounts).toEqual({ stop: 0, caution: 300 });
		expect(r.findings.map((f) => (f.subject as { line: number }).line)).toEqual(
			Array.from({ length: 10 }, (_, i) => 6 + i)
		);
	});

	test('streaming in pieces gives the same result as the whole text', () => {
		const text = program(...withLine(CLEAN, 10, 'G0 Z0.1')).replace(/\n/g, '\r\n');
		const whole = checkProgram(text, PUMP);
		for (const size of [1, 2, 3, 7, 64]) {
			const c = createProgramChecker(PUMP);
			for (let i = 0; i < text.length; i += size) c.push(text.slice(i, i + size));
			expect(c.end(), `pieces of ${size}`).toEqual(whole);
		}
	});

	test('an empty program reads as zero lines and no findings; end() is repeatable', () => {
		const c = createProgramChecker(PUMP);
		const first = c.end();
		expect(first.stats.lines).toBe(0);
		expect(first.findings).toEqual([]);
		c.push('G0 Z1.\n');
		expect(c.end()).toBe(first);
	});

	test('a bad setup throws OffsetInputError naming the field (the text never throws)', () => {
		expect(() =>
			checkProgram('G0 Z1.', { ...PUMP, machine: { units: 'inch', zTravel: -5 } })
		).toThrow(/setup.machine.zTravel/);
		expect(() =>
			checkProgram('G0 Z1.', { ...PUMP, machine: { ...PUMP.machine, units: 'mm' } })
		).toThrow(/setup.table.units/);
	});
});
