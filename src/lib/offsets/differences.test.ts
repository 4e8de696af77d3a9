import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { offsetDelta, tipZ, zeroHeightFromWorkOffset } from './differences';
import { OffsetInputError } from './errors';
import { workOffsetZFromReadings } from './readings';

describe('offsetDelta: the change from the previous value', () => {
	test('a change of one inch increment is exactly one increment', () => {
		// 0.0001 in least increment: M. Lynch, Modern Machine Shop (SOURCES.md 6)
		// example values (invented); binary floats give -14.7502 - -14.75 = -0.00019999999999953388
		expect(-14.7502 - -14.75).not.toBe(-0.0002);
		expect(offsetDelta(-14.7502, -14.75)).toBe(-0.0002);
	});

	test('a metric change of one increment', () => {
		// 0.001 mm least increment: M. Lynch, Modern Machine Shop (SOURCES.md 6); values invented
		expect(offsetDelta(-289.835, -289.836)).toBe(0.001);
		expect(offsetDelta(0.3, 0.1)).toBe(0.2);
	});

	test('no change is zero, never -0', () => {
		// change = new − old, common shop practice
		expect(Object.is(offsetDelta(-12.3, -12.3), 0)).toBe(true);
	});

	test('any two values to the micro-unit: the change added back gives the value', () => {
		// docs/OFFSETS.md §3: sums on integers of one micro-unit (our engine's rule)
		const micro = fc.integer({ min: -500_000_000, max: 500_000_000 });
		fc.assert(
			fc.property(micro, micro, (a, b) => {
				const value = a / 1e6;
				const previous = b / 1e6;
				const d = offsetDelta(value, previous);
				expect(Math.round(d * 1e6)).toBe(a - b);
				expect(offsetDelta(previous, value)).toBe(-d || 0);
			})
		);
	});

	test('refuses a value that is not a finite number, naming the field', () => {
		expect(() => offsetDelta(Number.NaN, 1)).toThrow(OffsetInputError);
		expect(() => offsetDelta(1, Number.POSITIVE_INFINITY)).toThrow(/previous/);
	});
});

describe('tipZ: the reading minus the block under the tip', () => {
	test('through a 0.100 in gauge block', () => {
		// ETSU ENTC 3710 ch. 11: touch-off on a 0.100 in block; subtract the block (DESIGN.md §2)
		// example reading (invented)
		expect(tipZ(-13.9, 0.1)).toBe(-14);
		expect(tipZ(-14.6502, 0.1)).toBe(-14.7502);
	});

	test('touched directly: the reading itself', () => {
		// no block, nothing to subtract (DESIGN.md §2)
		expect(tipZ(-14.7502, 0)).toBe(-14.7502);
	});
});

describe('zeroHeightFromWorkOffset: h_k from W by the convention table', () => {
	// DESIGN.md §2 / docs/OFFSETS.md §2: W_k + H_i = R + h_k + L_i in every convention.
	const R = -15; // gauge line on the reference (invented)
	const Lm = 4.25; // master tool length (invented)

	test('reference-touch: W is h itself', () => {
		// reference-touch W_k = h_k: ETSU ENTC 3710 ch. 11; "Contemporary CNC" notes (SOURCES.md 7, 8)
		expect(
			zeroHeightFromWorkOffset('reference-touch', 2.5, {
				referenceGaugeLineZ: null,
				masterTouchZ: null
			})
		).toBe(2.5);
	});

	test('gauge-length: h = W − R, and needs R', () => {
		// gauge-length W_k = R + h_k: Modern Machine Shop, "CNC Tech Talk", Jan 2017 (SOURCES.md 8)
		expect(
			zeroHeightFromWorkOffset('gauge-length', -12.4999, {
				referenceGaugeLineZ: R,
				masterTouchZ: null
			})
		).toBe(2.5001);
		expect(
			zeroHeightFromWorkOffset('gauge-length', -12.5, {
				referenceGaugeLineZ: null,
				masterTouchZ: null
			})
		).toBeNull();
	});

	test('master-tool: h = W − (R + L_m), and needs the master touch', () => {
		// master-tool W_k = R + h_k + L_m: common shop practice (docs/OFFSETS.md §2)
		const masterTouchZ = R + Lm; // -10.75
		expect(
			zeroHeightFromWorkOffset('master-tool', -8.2499, { referenceGaugeLineZ: R, masterTouchZ })
		).toBe(2.5001);
		expect(
			zeroHeightFromWorkOffset('master-tool', -8.25, {
				referenceGaugeLineZ: R,
				masterTouchZ: null
			})
		).toBeNull();
	});

	test('inverts workOffsetZFromReadings in every convention', () => {
		// the engine's own forward formula (docs/OFFSETS.md §4) read backwards; values invented
		const referenceZ = -14.9;
		const partTopZ = -12.3499;
		const h = 2.5501; // partTopZ − referenceZ
		for (const convention of ['reference-touch', 'gauge-length', 'master-tool'] as const) {
			const W = workOffsetZFromReadings({
				convention,
				units: 'inch',
				referenceZ,
				partTopZ,
				referenceGaugeLineZ: R,
				masterTouchZ: R + Lm
			});
			expect(
				zeroHeightFromWorkOffset(convention, W, {
					referenceGaugeLineZ: R,
					masterTouchZ: R + Lm
				})
			).toBe(h);
		}
	});
});
