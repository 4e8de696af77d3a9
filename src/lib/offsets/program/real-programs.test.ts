/**
 * The program check on the programs shops really run (issue 14): each numbered example of
 * what went wrong, with the dialect rule or shop practice behind the expected answer named.
 * Setup: PUMP (test-data.ts) — G54 part top 1.25 in, G55 4.5 in above the reference,
 * clearance height 5.5 in, H1 = −15, H2 = −14.5, 20 in of Z travel.
 */
import { describe, expect, test } from 'vitest';
import { checkProgram, createProgramChecker } from './checker';
import type { ProgramSetup } from './schema';
import { CLEAN, PUMP, program } from './test-data';

const ISO: ProgramSetup = { ...PUMP, machine: { ...PUMP.machine, controlStyle: 'iso' } };
const NGC: ProgramSetup = { ...PUMP, machine: { ...PUMP.machine, controlStyle: 'rs274ngc' } };

/** [kind, line, severity], in line order. */
function found(text: string, setup: ProgramSetup) {
	return checkProgram(text, setup)
		.findings.map((f) => [
			f.kind,
			f.subject.type === 'program-line' ? f.subject.line : 0,
			f.severity
		])
		.sort(
			(a, b) => (a[1] as number) - (b[1] as number) || String(a[0]).localeCompare(String(b[0]))
		);
}

const withLine = (lines: string[], index: number, text: string) =>
	lines.map((l, i) => (i === index - 1 ? text : l));

describe('1. the safe-start block', () => {
	const SAFE = withLine(CLEAN, 3, 'G0 G17 G40 G49 G80 G90 G20');

	test('ISO-style: G80 shares a block with G0 (its own group); the block is taken whole', () => {
		// ISO 6983-style controls: G80 cancels cycles in a group of its own (dialect.ts).
		const r = checkProgram(program(...SAFE), ISO);
		expect(r.findings).toEqual([]);
		expect(r.stats.units.program).toBe('inch');
		expect(r.stats.dialect).toBe('iso');
		expect(r.stats.dialectFrom).toBe('machine');
	});

	test('RS274NGC-style: one stop on that line, and no cascade after it', () => {
		// NISTIR 6556 §3.4 [memory]: G0 and G80 are both group 1, so the line is refused; its
		// G20 and G90 are still applied quietly, so no "no G20/G21" or "no motion mode" follows.
		expect(found(program(...SAFE), NGC)).toEqual([['parse-error', 3, 'stop']]);
		const f = checkProgram(program(...SAFE), NGC).findings[0];
		expect(f.message).toMatch(/G80 and G0.*ISO-style/);
	});

	test('the dialect can be chosen for a check, over the machine’s', () => {
		const r = checkProgram(program(...SAFE), { ...NGC, dialect: 'iso' });
		expect(r.findings).toEqual([]);
		expect(r.stats.dialectFrom).toBe('chosen');
	});
});

describe('2. G43 without an H word', () => {
	// Op A with G43 H1, then G43 without H before moving to op B low: the rapid at line 12
	// (G55 at the working height of G54) must be caught in both dialects.
	const lines = [
		'%',
		'O1002',
		'G20 G17 G40 G80 G90', // 3
		'T1 M6', // 4
		'G54 G0 X1. Y1.', // 5
		'G43 H1 Z4.5', // 6
		'G1 Z-0.25 F20.', // 7  tip 1.0
		'G0 Z0.1', // 8  tip 1.35: still low
		'G43 Z0.1', // 9  no H
		'X2.', // 10
		'Y2.', // 11
		'G55 X10. Y1.', // 12 sideways to op B at tip 1.35 → stop
		'M30'
	];

	test('ISO-style keeps the H in force (H1) and keeps computing heights', () => {
		// H modal on ISO-style controls [memory] (dialect.ts, g43WithoutH).
		expect(found(program(...lines), ISO)).toEqual([['low-traverse', 12, 'stop']]);
	});

	test('RS274NGC-style uses the loaded tool (T1 → H1), same answer', () => {
		// G43 without H takes the loaded tool's entry (SOURCES.md #2 [memory]).
		expect(found(program(...lines), NGC)).toEqual([['low-traverse', 12, 'stop']]);
		expect(
			found(program('G20 G90', 'T1 M6', 'G43', 'G54 G0 X1. Y1. Z4.5', 'G1 Z0.', 'M30'), NGC)
		).toEqual([]);
	});

	test('RS274NGC-style with no tool loaded, ISO-style with no H before: a stop', () => {
		expect(found(program('G20 G90', 'G43', 'G54 G0 X1. Y1. Z4.5', 'M30'), NGC)).toEqual([
			['unknown-tool-offset', 2, 'stop']
		]);
		expect(found(program('G20 G90', 'T1 M6', 'G0 G43 Z4.5', 'M30'), ISO)).toEqual([
			['unknown-tool-offset', 3, 'stop']
		]);
	});
});

describe('3. severity-safe caps', () => {
	test('26 cautions then a stop: the stop is kept and every count is exact', () => {
		// G54 cut at tip 1.0 (below the part top 1.25), then 26 sideways rapids there: each a
		// "below its own part top" caution; then op B is reached without lifting: a stop.
		const lines = [
			...CLEAN.slice(0, 8), // … G1 Z-0.25 at line 8
			...Array.from({ length: 26 }, (_, i) => `G0 X${2 + i * 0.1}`), // lines 9–34
			'G55 X10. Y1.', // 35
			'M30'
		];
		const r = checkProgram(program(...lines), ISO);
		const stops = r.findings.filter((f) => f.severity === 'stop');
		expect(stops.map((f) => [f.kind, f.subject.type === 'program-line' && f.subject.line])).toEqual(
			[['low-traverse', 35]]
		);
		expect(r.findings.filter((f) => f.severity === 'caution')).toHaveLength(25);
		expect(r.stats.findingCounts['low-traverse']).toBe(27);
		expect(r.stats.severityCounts).toEqual({ stop: 1, caution: 26 });
		expect(r.stats.suppressed).toBe(1);
	});

	test('stops are never capped (maxFindingsPerKind limits cautions only)', () => {
		const bad = Array.from({ length: 40 }, (_, i) => `G1 X${i}. JUNK`);
		const r = checkProgram(program('G20 G90', ...bad), { ...ISO, maxFindingsPerKind: 5 });
		expect(r.findings.filter((f) => f.kind === 'parse-error')).toHaveLength(40);
		expect(r.stats.severityCounts.stop).toBe(40);
		expect(r.stats.suppressed).toBe(0);
	});
});

describe('4. program structure', () => {
	test('o-sub bodies run where called, not where written (RS274NGC-style)', () => {
		const text = program(
			'o100 sub', // 1
			'G0 Z-0.5', // 2  a rapid into the part: only when called from G54
			'o100 endsub', // 3
			'G20 G90 G17', // 4
			'T1 M6', // 5
			'G43 H1', // 6
			'G54 G0 X1. Y1. Z4.5', // 7
			'M30' // 8
		);
		expect(found(text, NGC)).toEqual([]);
		const called = text.replace('M30', 'o100 call\nM30');
		expect(found(called, NGC)).toEqual([['rapid-into-part', 2, 'stop']]);
		expect(checkProgram(called, NGC).stats.callsFollowed).toBe(1);
	});

	test('ISO-style O…M99 after M30 is not main-line code; M98 P follows it', () => {
		const main = [
			'%',
			'O1003', // 2
			'G20 G17 G40 G80 G90', // 3
			'T1 M6', // 4
			'G54 G0 X1. Y1.', // 5
			'G43 H1 Z4.5', // 6
			'M98 P2000', // 7  the body leaves the tip at 1.35 (Z0.1)
			'G55 X10. Y1.', // 8  → moved between fixtures low: stop
			'M30', // 9
			'%', // 10
			'O2000 (FACE)', // 11
			'G0 Z0.1', // 12
			'G1 Z-0.1 F20.', // 13
			'G0 Z0.1', // 14
			'M99' // 15
		];
		expect(found(program(...main), ISO)).toEqual([['low-traverse', 8, 'stop']]);
		// Not called: the body is never checked as main-line code.
		expect(found(program(...withLine(main, 7, '(no call)')), ISO)).toEqual([]);
	});

	test('a streaming checker without the first pass says the later body is not known', () => {
		const c = createProgramChecker(ISO);
		c.push(program(...CLEAN.slice(0, 6), 'M98 P2000', 'G0 Z4.5', 'M30', 'O2000', 'G0 Z0.1', 'M99'));
		const r = c.end();
		expect(r.findings.map((f) => [f.kind, f.data])).toEqual([
			['heights-unknown', { from: 7, until: 8 }]
		]);
		expect(r.findings[0].message).toMatch(/O2000 is not in this file \(or not before its call\)/);
	});

	test('M98 with repeats runs an incremental body that many times', () => {
		const text = program(
			'G20 G90 G17', // 1
			'T1 M6', // 2
			'G54 G0 X1. Y1.', // 3
			'G43 H1 Z0.1', // 4  tip 1.35
			'M98 P3000 L3', // 5
			'G90 G0 Z4.5', // 6
			'M30', // 7
			'O3000', // 8
			'G91 G1 Z-0.1 F10.', // 9
			'M99' // 10
		);
		const r = checkProgram(text, ISO);
		expect(r.findings).toEqual([]);
		// three passes of −0.1 from 1.35: lowest tip 1.05 (ISO-style L repeats [memory])
		expect(r.stats.tipZRange['1'].min).toBeCloseTo(1.05, 6);
	});

	test('a subprogram that calls itself is not followed: heights unknown, once', () => {
		const text = program(
			'G20 G90 T1 M6',
			'G43 H1 G54 G0 X1. Y1. Z4.5',
			'M98 P10', // 3
			'G0 Z4.5', // 4
			'M30',
			'O10',
			'G0 Z1.',
			'M98 P10',
			'M99'
		);
		const r = checkProgram(text, ISO);
		expect(r.findings.map((f) => [f.kind, f.severity, f.data])).toEqual([
			['heights-unknown', 'caution', { from: 8, until: 4 }]
		]);
		expect(r.findings[0].message).toMatch(/calls itself/);
	});

	test('an unknown motion code: one "heights unknown" span, picked up at the next absolute Z', () => {
		const lines = [
			...CLEAN.slice(0, 7), // … Z0.1 at line 7
			'G33.1 Z-0.5 K0.05', // 8  unknown here (NIST v3 has no G33.1)
			'X2.', // 9
			'Z0.2', // 10 in G33.1's mode still: not followed
			'G0 Z4.5', // 11 known motion, absolute Z: heights known again
			...CLEAN.slice(10) // G55 … (lines 12–)
		];
		const r = checkProgram(program(...lines), NGC);
		expect(r.findings.map((f) => [f.kind, f.severity, f.data])).toEqual([
			['heights-unknown', 'caution', { from: 8, until: 11 }]
		]);
		expect(r.findings[0].message).toMatch(/G33\.1 is not a code this check knows/);
		// G76 is a fine-boring cycle on ISO-style mills, unknown in RS274NGC v3.
		const g76 = program(...withLine(CLEAN, 8, 'G76 Z-0.25 R0.1 Q0.01 F10.'));
		expect(found(g76, ISO)).toEqual([]);
		expect(found(g76, NGC).map((f) => f[0])).toEqual(['heights-unknown']);
	});
});

describe('5. rapid plunges', () => {
	test('G0 Z0.1 then Z-0.5 still in G0: straight down into the part at rapid, a stop', () => {
		const lines = withLine(withLine(CLEAN, 8, 'Z-0.5'), 9, 'G1 X2.'); // still G0 from line 5
		expect(found(program(...lines), ISO)).toEqual([['rapid-into-part', 8, 'stop']]);
		const f = checkProgram(program(...lines), ISO).findings[0];
		expect(f.message).toMatch(/into the material at full rapid/);
		expect(f.data).toEqual({ tipHeight: 0.75, topHeight: 1.25 });
	});

	test('a feed rate written under modal G0 is still a rapid', () => {
		// Below the part top: a stop naming the F word.
		const deep = withLine(withLine(CLEAN, 8, 'Z-0.25 F20.'), 9, 'G1 X2.');
		expect(found(program(...deep), ISO)).toEqual([['rapid-into-part', 8, 'stop']]);
		expect(checkProgram(program(...deep), ISO).findings[0].message).toMatch(/feed rate \(F\)/);
		// Above the part top but below the clearance height: a caution.
		const high = [...CLEAN.slice(0, 6), 'Z3. F20.', ...CLEAN.slice(7)];
		expect(found(program(...high), ISO)).toEqual([['rapid-into-part', 7, 'caution']]);
	});

	test('rapid down inside an already cut depth is only a caution; G1 plunges are fine', () => {
		// After G1 Z-0.25 (tip 1.0) and back up to Z-0.05 (tip 1.2, still below the top 1.25),
		// a rapid down to Z-0.2 stays inside the cut.
		const lines = [...CLEAN.slice(0, 8), 'Z-0.05', 'G0 Z-0.2', 'G1 X2.', ...CLEAN.slice(9)];
		expect(found(program(...lines), ISO)).toEqual([['rapid-into-part', 10, 'caution']]);
		expect(found(program(...CLEAN), ISO)).toEqual([]);
	});
});

describe('6. smaller ones', () => {
	test('a stray first character or "//" is a stop, not a silently dropped line', () => {
		expect(found(program(...withLine(CLEAN, 9, "'G0 Z-0.5")), ISO)).toEqual([
			['parse-error', 9, 'stop']
		]);
		expect(found(program(...withLine(CLEAN, 9, '// note')), ISO)).toEqual([
			['parse-error', 9, 'stop']
		]);
	});

	test('GOO (letter O) and nested comments are stops naming the typo, not "macros"', () => {
		const goo = checkProgram(program(...withLine(CLEAN, 10, 'GOO Z4.5')), ISO);
		expect(goo.findings[0].kind).toBe('parse-error');
		expect(goo.findings[0].severity).toBe('stop');
		expect(goo.findings[0].message).toMatch(/letter O/);
		const nested = checkProgram(program(...withLine(CLEAN, 9, 'X2. (CUT (A) SIDE)')), ISO);
		expect(nested.findings[0].message).toMatch(/comments do not nest/);
	});

	test('G90.1 and G91.1 (arc-centre mode) are known in both dialects', () => {
		const lines = withLine(CLEAN, 3, 'G20 G17 G40 G80 G90 G91.1');
		expect(found(program(...lines), ISO)).toEqual([]);
		expect(found(program(...withLine(CLEAN, 3, 'G20 G17 G40 G90 G90.1')), NGC)).toEqual([]);
	});

	test('overtravel once per tool, with the count of moves', () => {
		// No G43: the spindle goes to Z + W = 4.5 + 1.25 above machine zero (the top).
		const zs = Array.from({ length: 100 }, (_, i) => `Z${4 + (i % 2) * 0.5}`);
		const text = program('G20 G90', 'T1 M6', 'G54 G0 X1. Y1.', ...zs, 'T2 M6', 'G0 Z4.5', 'M30');
		const r = checkProgram(text, ISO);
		const over = r.findings.filter((f) => f.kind === 'overtravel');
		expect(over.map((f) => (f.subject as { line: number }).line)).toEqual([4, 105]);
		expect(over[0].message).toMatch(/99 more moves, the last on line 103/);
		expect(over[0].data).toMatchObject({ moreMoves: 99, lastLine: 103 });
		expect(r.stats.findingCounts.overtravel).toBe(2);
	});

	test('suppressed counts only findings left out, not a second one on the same line', () => {
		// A drilling cycle whose R and bottom are both past the travel: one finding, none left out.
		const text = program(
			'G20 G90',
			'T1 M6',
			'G43 H1 G54 G0 X1. Y1. Z4.5',
			'G81 R30. Z25. F5.',
			'M30'
		);
		const r = checkProgram(text, ISO);
		expect(r.stats.findingCounts.overtravel).toBe(1);
		expect(r.stats.suppressed).toBe(0);
	});

	test('another tool’s H is a stop when the tip then goes below the clearance height', () => {
		// T1 loaded, H2 applied (0.5 in shorter): at Z0.1 the real tip is 0.1 + 1.25 + 0.5 =
		// 1.85 above the reference, below the clearance height 5.5.
		const r = checkProgram(program(...withLine(CLEAN, 6, 'G43 H2 Z4.5')), ISO);
		expect(r.findings.map((f) => [f.kind, f.severity])).toEqual([['unknown-tool-offset', 'stop']]);
		expect(r.findings[0].message).toMatch(/H2.*T1.*1\.8500 in.*5\.5000 in/);
		expect(r.stats.severityCounts).toEqual({ stop: 1, caution: 0 });
	});
});
