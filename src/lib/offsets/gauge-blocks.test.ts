import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { OffsetInputError } from './errors';
import { gaugeStack } from './gauge-blocks';
import { GAUGE_SETS, gaugeSetBlocks } from './gauge-sets';

const tenths = (v: number) => Math.round(v * 10000); // 0.0001 in counts
const sumTenths = (stack: number[]) => stack.reduce((a, b) => a + tenths(b), 0);
const halfMicrons = (v: number) => Math.round(v * 2000); // 0.0005 mm counts

describe('gauge-block sets', () => {
	test('81-piece inch set composition', () => {
		// Metrology supplier's "Jo Block Stacks" page (SOURCES.md §10): .1001–.1009 (9), .101–.149 (49),
		// .050–.950 (19), 1, 2, 3, 4 in
		const blocks = gaugeSetBlocks(GAUGE_SETS['inch-81']);
		expect(blocks).toHaveLength(81);
		expect(new Set(blocks).size).toBe(81);
		for (const b of [0.1001, 0.1009, 0.101, 0.149, 0.05, 0.95, 1, 2, 3, 4])
			expect(blocks).toContain(b);
		expect(blocks).not.toContain(0.15 + 0.0001);
	});

	test('metric sets M87, M88, M112', () => {
		// SOURCES.md §12 compositions [memory]; counts are the set names
		expect(gaugeSetBlocks(GAUGE_SETS.M87)).toHaveLength(87);
		expect(gaugeSetBlocks(GAUGE_SETS.M88)).toHaveLength(88);
		expect(gaugeSetBlocks(GAUGE_SETS.M88)).toContain(1.0005);
		const m112 = gaugeSetBlocks(GAUGE_SETS.M112);
		expect(m112).toHaveLength(112);
		for (const b of [1.0005, 1.005, 1.04, 1.3, 5, 24.5, 25, 50, 75, 100]) expect(m112).toContain(b);
	});
});

describe('gaugeStack', () => {
	test('Starrett-Webber worked example 3.9762 = .1002 + .126 + .750 + 3.000', () => {
		// Starrett-Webber, "How to Select Gage Blocks for Use in Combinations" [read]
		expect(gaugeStack(3.9762, 'inch-81')).toEqual([0.1002, 0.126, 0.75, 3]);
	});

	test('supplier worked example 4.3301 = .1001 + .130 + .100 + 4.000', () => {
		// Metrology supplier's "Jo Block Stacks" page (SOURCES.md §10) [read]
		expect(gaugeStack(4.3301, '81')).toEqual([0.1001, 0.13, 0.1, 4]);
	});

	test('Octane Workholding worked example 5.0073 = .1003 + .107 + .800 + 4.000', () => {
		// Octane Workholding, "Calculating Gage Block Combinations" [read]
		expect(gaugeStack(5.0073, 'inch-81')).toEqual([0.1003, 0.107, 0.8, 4]);
	});

	test('NPL example 58.345 mm from M112: no more blocks than the published stack', () => {
		// NPL gauge block FAQ [read]: 58.345 = 1.005 + 1.04 + 1.30 + 5 + 50 (5 blocks)
		const published = [1.005, 1.04, 1.3, 5, 50];
		const m112 = gaugeSetBlocks(GAUGE_SETS.M112);
		expect(published.every((b) => m112.includes(b))).toBe(true);
		const stack = gaugeStack(58.345, 'M112');
		expect(stack.reduce((a, b) => a + halfMicrons(b), 0)).toBe(halfMicrons(58.345));
		expect(stack.length).toBeLessThanOrEqual(published.length);
		expect(stack[0]).toBe(1.005); // the last digit (.005) is cleared first
	});

	test('clear errors: unknown set, not buildable, off the set’s step, NaN', () => {
		expect(() => gaugeStack(1, 'M45')).toThrow(/setName: is not a gauge-block set/);
		try {
			gaugeStack(0.0501, 'inch-81');
			expect.unreachable();
		} catch (e) {
			expect((e as OffsetInputError).issues[0]).toMatchObject({ field: 'target', value: 0.0501 });
			expect((e as OffsetInputError).issues[0].message).toMatch(/cannot be built/);
		}
		expect(() => gaugeStack(1.23456, 'inch-81')).toThrow(/multiple of 0.0001/);
		expect(() => gaugeStack(40, 'inch-81')).toThrow(/taller than every block/);
		expect(() => gaugeStack(Number.NaN, 'M87')).toThrow(OffsetInputError);
		expect(() => gaugeStack(-1, 'M87')).toThrow(/greater than zero/);
	});

	test('property: every 81-piece stack from .200 to 12.000 sums exactly, blocks from the set, each once', () => {
		// "Jo Block Stacks" page (SOURCES.md §10): the 81-piece set covers .100–12.000 in by .0001
		const blocks = new Set(gaugeSetBlocks(GAUGE_SETS['inch-81']));
		fc.assert(
			fc.property(fc.integer({ min: 2000, max: 120000 }), (count) => {
				const target = count / 10000;
				const stack = gaugeStack(target, 'inch-81');
				expect(sumTenths(stack)).toBe(count);
				expect(new Set(stack).size).toBe(stack.length);
				for (const b of stack) expect(blocks.has(b)).toBe(true);
			}),
			{ numRuns: 300 }
		);
	});

	test('an M112 height too small to wring from its blocks is refused with a reason, not a wrong stack', () => {
		// 2.2115 mm needs 1.0005 for the last digit, then 1.211 — no block or pair of blocks in the set makes it.
		expect(() => gaugeStack(2.2115, 'M112')).toThrow(OffsetInputError);
	});

	test('property: M112 stacks from 10 mm to 300 mm sum exactly to the 0.0005 mm', () => {
		// Below about 10 mm some heights cannot be built at all (see the test above), so the
		// property starts where every 0.0005 mm step can be.
		fc.assert(
			fc.property(fc.integer({ min: 10 * 2000, max: 300 * 2000 }), (count) => {
				const stack = gaugeStack(count / 2000, 'M112');
				expect(stack.reduce((a, b) => a + halfMicrons(b), 0)).toBe(count);
				expect(new Set(stack).size).toBe(stack.length);
			}),
			{ numRuns: 200 }
		);
	});
});
