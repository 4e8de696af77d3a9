import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { formatLength, formatWithUnits, decimalsFor } from './format';
import { OffsetInputError } from './errors';
import {
	DEFAULT_RESOLUTION,
	fromIncrements,
	roundToResolution,
	toIncrements,
	toUnits
} from './units';

describe('inch and mm', () => {
	test('1 in = 25.4 mm exactly', () => {
		// NIST SP 811 App. B.8, 1 in = 2.54 × 10⁻² m exactly
		expect(toUnits(1, 'inch', 'mm')).toBe(25.4);
		expect(toUnits(25.4, 'mm', 'inch')).toBe(1);
	});

	test('1 yd = 0.9144 m exactly, so 36 in = 914.4 mm', () => {
		// Federal Register, 1 July 1959, "Refinement of Values for the Yard and the Pound": 1 yd = 0.9144 m
		expect(toUnits(36, 'inch', 'mm')).toBe(914.4);
	});

	test('0.0001 in = 0.00254 mm exactly', () => {
		// SOURCES.md §6: arithmetic from NIST SP 811's 25.4
		expect(toUnits(0.0001, 'inch', 'mm')).toBe(0.00254);
	});

	test('no binary-float surprises in a conversion', () => {
		// NIST SP 811 App. B.8: 25.4 mm per inch exactly, so 1.2 in is exactly 30.48 mm;
		// 1.2 × 25.4 in plain float arithmetic is 30.479999999999997; the exact product is 30.48
		expect(1.2 * 25.4).not.toBe(30.48);
		expect(toUnits(1.2, 'inch', 'mm')).toBe(30.48);
	});

	test('mm to inch at the control increment', () => {
		// 10 / 25.4 = 0.393700787…, 4 decimals in inch (M. Lynch, Modern Machine Shop: 0.0001 in increment)
		expect(toUnits(10, 'mm', 'inch', 'control')).toBe(0.3937);
		expect(toUnits(10, 'mm', 'inch')).toBeCloseTo(10 / 25.4, 12);
	});

	test('usual increments are 0.0001 in and 0.001 mm', () => {
		// M. Lynch, "Reducing a CNC's Least Input Increment Value", Modern Machine Shop [read]
		expect(DEFAULT_RESOLUTION).toEqual({ inch: 0.0001, mm: 0.001 });
		expect(decimalsFor(DEFAULT_RESOLUTION.inch)).toBe(4);
		expect(decimalsFor(DEFAULT_RESOLUTION.mm)).toBe(3);
	});

	test('property: inch → mm → inch returns the same 0.0001 in increment', () => {
		// M. Lynch, Modern Machine Shop: increments 0.0001 in and 0.001 mm; NIST SP 811: 0.0001 in =
		// 0.00254 mm, so 0.001 mm < half of it (0.00127 mm) and the round trip cannot move an increment
		fc.assert(
			fc.property(fc.integer({ min: -500_000, max: 500_000 }), (count) => {
				const inch = fromIncrements(count, 0.0001);
				const mm = toUnits(inch, 'inch', 'mm', 'control');
				const back = toUnits(mm, 'mm', 'inch', 'control');
				expect(toIncrements(back, 0.0001)).toBe(count);
			})
		);
	});

	test('property: mm → inch → mm moves a value by at most half of 0.0001 in', () => {
		// same sources: rounding to 0.0001 in moves at most 0.00127 mm, back to 0.001 mm at most 0.0005
		fc.assert(
			fc.property(fc.integer({ min: -500_000, max: 500_000 }), (count) => {
				const mm = fromIncrements(count, 0.001);
				const viaInch = toUnits(toUnits(mm, 'mm', 'inch', 'control'), 'inch', 'mm', 0.001);
				expect(Math.abs(viaInch - mm)).toBeLessThanOrEqual(0.00127 + 0.0005 + 1e-12);
			})
		);
	});
});

describe('rounding to the resolution (halves away from zero)', () => {
	test('halves go away from zero, both signs', () => {
		// our stated rule (docs/OFFSETS.md), no published source: half away from zero, so a
		// negative offset rounds like its positive twin
		expect(roundToResolution(1.23455, 0.0001)).toBe(1.2346);
		expect(roundToResolution(-1.23455, 0.0001)).toBe(-1.2346);
		expect(roundToResolution(0.00005, 'inch')).toBe(0.0001);
		expect(roundToResolution(0.0005, 'mm')).toBe(0.001);
	});

	test('reads the decimal as typed, not its binary neighbour', () => {
		// 0.00015 / 0.0001 in float arithmetic is 1.4999999999999998, so a naive round gives 0.0001;
		// read as typed it is an exact half and goes away from zero
		expect(Math.round(0.00015 / 0.0001)).toBe(1);
		expect(roundToResolution(0.00015, 0.0001)).toBe(0.0002);
		expect(roundToResolution(2.00005, 0.0001)).toBe(2.0001);
	});

	test('a control with its own step', () => {
		// example data: a control working to 0.0005 mm (invented)
		expect(roundToResolution(2.00074, 0.0005)).toBe(2.0005);
		expect(roundToResolution(2.00075, 0.0005)).toBe(2.001);
	});

	test('property: increments are integers and rounding is idempotent', () => {
		// arithmetic on the 0.0001 in increment (M. Lynch, Modern Machine Shop)
		fc.assert(
			fc.property(fc.double({ min: -1000, max: 1000, noNaN: true }), (v) => {
				const once = roundToResolution(v, 0.0001);
				expect(roundToResolution(once, 0.0001)).toBe(once);
				expect(Math.abs(once - v)).toBeLessThanOrEqual(0.00005 + 1e-9);
			})
		);
	});

	test('bad numbers are refused with field and reason', () => {
		expect(() => roundToResolution(Number.NaN, 0.0001)).toThrow(OffsetInputError);
		expect(() => toUnits(Infinity, 'inch', 'mm')).toThrow(/finite/);
		expect(() => roundToResolution(1, 0)).toThrow(/greater than zero/);
		let refused: unknown;
		try {
			toUnits(1, 'inch', 'cm' as 'mm');
		} catch (e) {
			refused = e;
		}
		expect(refused).toBeInstanceOf(OffsetInputError);
		expect((refused as OffsetInputError).issues[0]).toMatchObject({ field: 'to', value: 'cm' });
	});
});

describe('fixed-decimal formatting', () => {
	test('4 decimals in inch, 3 in mm, unit beside the value', () => {
		// SOURCES.md §6: controls display 4 decimals in inch and 3 in mm (Modern Machine Shop)
		expect(formatLength(-12.3, 'inch')).toBe('-12.3000');
		expect(formatLength(5, 'mm')).toBe('5.000');
		expect(formatWithUnits(0.5, 'inch')).toBe('0.5000 in');
		expect(formatLength(-0.00001, 'inch')).toBe('0.0000');
	});
});
