import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { spindleZ } from './spindle';

describe('spindleZ', () => {
	test('machine Z = program Z + work offset Z + tool length offset', () => {
		// NIST RS274NGC v3 (NISTIR 6556): machine Z = program Z + coordinate-system Z + G92 Z + tool length offset
		// example data (invented): G54 Z −14.0 in, H2 = 2.4 in (a Table 1 sample length), program Z 0.1
		expect(spindleZ(-14, 2.4)).toBe(-11.6);
		expect(spindleZ(-14, 2.4, 0.1)).toBe(-11.5);
	});

	test('G92 offset adds in, as in the NIST G92 example', () => {
		// NIST RS274NGC v3 (NISTIR 6556) §3.5.18: at 4 with zero offset, G92 7 makes the offset −3;
		// so program 7 + G92 offset −3 = machine 4 (same composition on Z, no work or tool offset)
		expect(spindleZ(0, 0, 7, -3)).toBe(4);
		// then G92 9 makes the offset −5: program 9 + (−5) = machine 4
		expect(spindleZ(0, 0, 9, -5)).toBe(4);
	});

	test('zero tool length offset leaves the gauge line as the controlled point', () => {
		// NIST RS274NGC v3 §2.1.2.3 / §3.5.11: H0 is a zero offset, the controlled point is the gauge point
		expect(spindleZ(-10.25, 0, 1)).toBe(-9.25);
	});

	test('exact decimal sums (no 0.1 + 0.2 surprises)', () => {
		// NISTIR 6556 composition (a plain sum); 0.1 + 0.2 in binary floats is 0.30000000000000004
		expect(0.1 + 0.2).not.toBe(0.3);
		expect(spindleZ(0.1, 0.2)).toBe(0.3);
	});

	test('property: sum is exact at the 0.0001 in increment', () => {
		// NISTIR 6556 composition; 0.0001 in increment (M. Lynch, Modern Machine Shop)
		fc.assert(
			fc.property(
				fc.integer({ min: -200_000, max: 200_000 }),
				fc.integer({ min: -200_000, max: 200_000 }),
				(w, h) => {
					expect(Math.round(spindleZ(w / 10000, h / 10000) * 10000)).toBe(w + h);
					expect(spindleZ(w / 10000, h / 10000)).toBe(Number(((w + h) / 10000).toFixed(4)));
				}
			)
		);
	});

	test('NaN and infinities are refused with the field named', () => {
		expect(() => spindleZ(Number.NaN, 1)).toThrow(/workZ: is not a number/);
		expect(() => spindleZ(1, Infinity)).toThrow(/toolOffset/);
	});
});
