import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import type { Convention } from './conventions';
import { convertTable, convertTableUnits, tableFromGeometry } from './convert';
import { OffsetInputError } from './errors';
import type { OffsetTable } from './types';

// Example data (invented): a Mill 1-like inch machine. R = gauge-line Z on the reference = −15 in.
// Tool lengths are the NIST RS274NGC v3 (NISTIR 6556) Table 1 sample lengths 2.0, 1.0, 1.5, 2.4 in.
// Zero heights above the reference: G54 1.25 in, G55 3 in. Master tool H1 (L_m = 2.0).
const R = -15;
const MASTER_TOUCH = -13; // R + L_m

// Each table written out by hand from the DESIGN.md §2 formulas (not from the engine).
const RT: OffsetTable = {
	convention: 'reference-touch', // H = R + L, W = h
	units: 'inch',
	work: { G54: 1.25, G55: 3 },
	tools: { '1': -13, '2': -14, '3': -13.5, '4': -12.6 }
};
const GL: OffsetTable = {
	convention: 'gauge-length', // H = L, W = R + h
	units: 'inch',
	work: { G54: -13.75, G55: -12 },
	tools: { '1': 2, '2': 1, '3': 1.5, '4': 2.4 }
};
const MT: OffsetTable = {
	convention: 'master-tool', // H = L − L_m, W = R + h + L_m
	units: 'inch',
	work: { G54: -11.75, G55: -10 },
	tools: { '1': 0, '2': -1, '3': -0.5, '4': 0.4 },
	masterTool: '1'
};
const BY: Record<Convention, OffsetTable> = {
	'reference-touch': RT,
	'gauge-length': GL,
	'master-tool': MT
};
const GEOMETRY = { referenceGaugeLineZ: R, masterTouchZ: MASTER_TOUCH, masterTool: '1' };

function spindleZs(t: OffsetTable): number[] {
	const out: number[] = [];
	for (const w of Object.values(t.work))
		for (const h of Object.values(t.tools)) out.push(Math.round((w + h) * 10000));
	return out;
}

describe('convertTable', () => {
	for (const from of Object.keys(BY) as Convention[]) {
		for (const to of Object.keys(BY) as Convention[]) {
			test(`${from} → ${to} gives the hand-computed table`, () => {
				// DESIGN.md §2 conventions table; composition W + H = spindle Z per NISTIR 6556
				expect(convertTable(BY[from], to, GEOMETRY)).toEqual(BY[to]);
			});
		}
	}

	test('the three hand-written tables put the spindle at the same Z for every pair', () => {
		// NIST RS274NGC v3 (NISTIR 6556): spindle Z at program Z0 = work offset Z + tool length offset
		expect(spindleZs(GL)).toEqual(spindleZs(RT));
		expect(spindleZs(MT)).toEqual(spindleZs(RT));
	});

	test('signs match the published descriptions of each convention', () => {
		// ETSU ENTC 3710 ch. 11 and "Contemporary CNC" notes: touched to the table/reference, the
		// tool length offset is negative and G54 Z is the positive work height
		expect(Object.values(RT.tools).every((v) => v < 0)).toBe(true);
		expect(Object.values(RT.work).every((v) => v > 0)).toBe(true);
		// Modern Machine Shop, "CNC Tech Talk", Jan 2017: offset = positive tool length, G54 Z large negative
		const gl = convertTable(RT, 'gauge-length', GEOMETRY);
		expect(Object.values(gl.tools).every((v) => v > 0)).toBe(true);
		expect(Object.values(gl.work).every((v) => v < -10)).toBe(true);
	});

	test('reference-touch → master-tool needs no geometry; the master defaults to the lowest H', () => {
		// DESIGN.md §2: reference-touch ↔ master-tool needs no R
		const mt = convertTable(RT, 'master-tool');
		expect(mt.masterTool).toBe('1');
		expect(mt).toEqual(MT);
	});

	test('a different master can be chosen', () => {
		const mt = convertTable(RT, 'master-tool', { masterTool: '4' });
		expect(mt.tools['4']).toBe(0);
		expect(spindleZs(mt)).toEqual(spindleZs(RT));
	});

	test('missing R is named, with what to do', () => {
		try {
			convertTable(RT, 'gauge-length');
			expect.unreachable();
		} catch (e) {
			expect(e).toBeInstanceOf(OffsetInputError);
			expect((e as OffsetInputError).issues[0].field).toBe('geometry.referenceGaugeLineZ');
			expect((e as OffsetInputError).issues[0].message).toMatch(/reference/);
		}
		expect(() => convertTable(MT, 'reference-touch')).toThrow(/geometry.masterTouchZ/);
	});

	test('unknown registers, NaN and infinities are refused by field', () => {
		expect(() => convertTable({ ...RT, work: { G53: 1 } }, 'master-tool')).toThrow(
			/table.work.G53: must be a work offset G54/
		);
		expect(() => convertTable({ ...RT, work: { 'G54.1 P49': 1 } }, 'master-tool')).toThrow(
			OffsetInputError
		);
		expect(() => convertTable({ ...RT, tools: { '1': Number.NaN } }, 'master-tool')).toThrow(
			/table.tools.1: is not a number \(NaN\)/
		);
		expect(() => convertTable({ ...RT, tools: { '1': Infinity } }, 'master-tool')).toThrow(
			/infinite/
		);
		expect(() => convertTable(RT, 'tool-tip' as Convention)).toThrow(/^to: must be one of/);
	});

	test('property: every pair keeps its spindle Z at program zero, in every direction', () => {
		const inc = (min: number, max: number) => fc.integer({ min, max }).map((n) => n / 10000);
		const conv = fc.constantFrom<Convention>('reference-touch', 'gauge-length', 'master-tool');
		fc.assert(
			fc.property(
				inc(-180_000, -50_000), // R
				fc.array(inc(5_000, 60_000), { minLength: 1, maxLength: 6 }), // tool lengths
				fc.array(inc(-5_000, 40_000), { minLength: 1, maxLength: 6 }), // zero heights
				conv,
				conv,
				(r, lengths, heights, from, to) => {
					const toolLengths = Object.fromEntries(lengths.map((l, i) => [String(i + 1), l]));
					const regs = ['G54', 'G55', 'G56', 'G57', 'G58', 'G59'];
					const zeroHeights = Object.fromEntries(heights.map((h, i) => [regs[i], h]));
					const source = tableFromGeometry(
						{ referenceGaugeLineZ: r, toolLengths, zeroHeights, masterTool: '1' },
						from,
						'inch'
					);
					const out = convertTable(source, to, {
						referenceGaugeLineZ: r,
						masterTouchZ: (Math.round(r * 1e4) + Math.round(lengths[0] * 1e4)) / 1e4,
						masterTool: '1'
					});
					// invariant of DESIGN.md §2, checked independently in integer 0.0001 in
					for (const [k, h] of Object.entries(zeroHeights)) {
						for (const [t, l] of Object.entries(toolLengths)) {
							const expected = Math.round(r * 1e4) + Math.round(h * 1e4) + Math.round(l * 1e4);
							expect(Math.round(out.work[k] * 1e4) + Math.round(out.tools[t] * 1e4)).toBe(expected);
						}
					}
					// and the tool offsets follow the target convention's formula
					const l1 = Math.round(lengths[0] * 1e4);
					for (const [t, l] of Object.entries(toolLengths)) {
						const li = Math.round(l * 1e4);
						const want =
							to === 'reference-touch'
								? Math.round(r * 1e4) + li
								: to === 'gauge-length'
									? li
									: li - l1;
						expect(Math.round(out.tools[t] * 1e4)).toBe(want);
					}
				}
			)
		);
	});
});

describe('convertTableUnits', () => {
	test('inch → mm is exact, and back gives the same table', () => {
		// NIST SP 811 App. B.8: 1 in = 25.4 mm exactly
		const mm = convertTableUnits(RT, 'mm');
		expect(mm.tools['4']).toBe(-320.04); // −12.6 × 25.4
		expect(mm.work.G54).toBe(31.75); // 1.25 × 25.4
		expect(convertTableUnits(mm, 'inch')).toEqual(RT);
	});
});
