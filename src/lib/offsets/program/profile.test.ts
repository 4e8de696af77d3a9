import { describe, expect, test } from 'vitest';
import { checkProgram, checkProgramStream, createProgramChecker } from './checker';
import { BUCKETS, MAX_TOOL_CHANGES, Profile } from './profile';
import { programBytes as bytes } from './lines';
import { OKind, readOLine } from './structure';
import { CLEAN, PUMP, program } from './test-data';

describe('the picture of tip heights (Profile)', () => {
	test('every move is a point while the buckets last', () => {
		const p = new Profile();
		for (let i = 1; i <= 10; i++) p.point(i, i % 3, i % 2 === 0);
		const r = p.result((v) => v);
		expect(r.points).toHaveLength(10);
		expect(r.movesPerPoint).toBe(1);
		expect(r.points[1]).toEqual([2, 2, 1]);
	});

	test('a long program is downsampled, and the lowest point of every stretch is kept', () => {
		const p = new Profile();
		const n = BUCKETS * 50;
		// Mostly at 5; one deep point (−3) at line 77 777 and a shallower dip every 1 000 lines.
		for (let line = 1; line <= n; line++)
			p.point(line, line === 77_777 ? -3 : line % 1000 === 0 ? 1 : 5, false);
		const r = p.result((v) => v);
		expect(r.points.length).toBeLessThanOrEqual(2 * BUCKETS);
		expect(r.movesPerPoint).toBe(64);
		expect(r.points).toContainEqual([77_777, -3, 0]);
		for (let line = 1000; line <= n; line += 1000)
			if (line !== 77_000) expect(r.points.some((q) => q[0] === line)).toBe(true);
		// In line order.
		expect(r.points.every((q, i) => i === 0 || q[0] > r.points[i - 1][0])).toBe(true);
	});

	test('thousands of tool changes: at most MAX_TOOL_CHANGES kept, spread over the whole program, all counted', () => {
		const p = new Profile();
		const n = 5_000;
		for (let i = 0; i < n; i++) p.toolChange(10 + i * 20, String((i % 4) + 1));
		const r = p.result((v) => v);
		expect(r.toolChangeCount).toBe(n);
		expect(r.toolChanges.length).toBeLessThanOrEqual(MAX_TOOL_CHANGES);
		// Every 4th change (stride 4: 5 000 → 1 250), the first at line 10, the last near the end.
		expect(r.toolChangesPerMark).toBe(4);
		expect(r.toolChanges).toHaveLength(1250);
		expect(r.toolChanges[0]).toEqual([10, '1']);
		expect(r.toolChanges[1]).toEqual([90, '1']);
		expect(r.toolChanges.at(-1)![0]).toBe(10 + 4996 * 20);
		expect(r.toolChanges.every((c, i) => i === 0 || c[0] - r.toolChanges[i - 1][0] === 80)).toBe(
			true
		);
	});

	test('checkProgram keeps it when asked: tip heights above the reference, tool changes', () => {
		const r = checkProgram(program(...CLEAN), { ...PUMP, profile: true });
		// After T1 M6 the spindle is at machine Z 0: tip 0 − H1 = 15 (reference-touch, DESIGN.md §2).
		expect(r.profile?.points[0]).toEqual([4, 15, 1]);
		expect(r.profile?.toolChanges).toEqual([[4, '1']]);
		expect([r.profile?.toolChangeCount, r.profile?.toolChangesPerMark]).toEqual([1, 1]);
		// The lowest point: G54 Z-0.25 → 1.0 (line 8, a feed).
		expect(r.profile?.points).toContainEqual([8, 1, 0]);
		expect(checkProgram(program(...CLEAN), PUMP).profile).toBeUndefined();
	});
});

describe('structure', () => {
	test('O lines: numbers, o-subs, calls and flow', () => {
		expect(readOLine(bytes('O0100 (POCKET)'), 0, 14)).toEqual({ kind: OKind.Number, name: '100' });
		expect(readOLine(bytes(':2000'), 0, 5)).toEqual({ kind: OKind.Number, name: '2000' });
		expect(readOLine(bytes('o<Face> sub'), 0, 11)).toEqual({ kind: OKind.Sub, name: '<face>' });
		expect(readOLine(bytes('  o100 call [1] [2]'), 0, 19)).toEqual({
			kind: OKind.Call,
			name: '100'
		});
		expect(readOLine(bytes('o10 if [#1 GT 0]'), 0, 16)?.kind).toBe(OKind.Flow);
		expect(readOLine(bytes('G0 X1.'), 0, 6)).toBeNull();
	});

	test('a streamed check knows a later body only on a second pass (checkProgramStream)', async () => {
		const text = program(
			...CLEAN.slice(0, 6),
			'M98 P2000', // 7
			'G0 Z4.5', // 8
			'M30',
			'O2000',
			'G0 Z0.1',
			'Z-0.5', // 12: rapid into the part — seen only when the call is followed
			'G0 Z1.',
			'M99'
		);
		const one = createProgramChecker(PUMP);
		one.push(text);
		expect(one.end().findings.map((f) => f.kind)).toEqual(['heights-unknown']);
		expect(one.laterSubprograms()?.has('2000')).toBe(true);
		let reads = 0;
		const r = await checkProgramStream(async function* () {
			reads++;
			yield text.slice(0, 40);
			yield text.slice(40);
		}, PUMP);
		expect(reads).toBe(2);
		expect(
			r.findings.map((f) => [f.kind, f.subject.type === 'program-line' && f.subject.line])
		).toEqual([['rapid-into-part', 12]]);
		expect(r).toEqual(checkProgram(text, PUMP));
	});
});
