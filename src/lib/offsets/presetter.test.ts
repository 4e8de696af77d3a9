import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import type { Convention } from './conventions';
import { toolOffsetFromPresetter } from './presetter';
import { toolOffsetFromTouch } from './readings';

// DESIGN.md §2 conventions; NISTIR 6556 Table 1 sample tool lengths (SOURCES.md 1) as L.
describe('H from a presetter gauge length', () => {
	test('gauge-length: H = L (NIST RS274NGC v3 Table 1 length 2.4)', () => {
		expect(
			toolOffsetFromPresetter({ convention: 'gauge-length', units: 'inch', gaugeLength: 2.4 })
		).toBe(2.4);
	});

	test('reference-touch: H = R + L', () => {
		// DESIGN.md §2; R invented
		expect(
			toolOffsetFromPresetter({
				convention: 'reference-touch',
				units: 'inch',
				gaugeLength: 2.4,
				referenceGaugeLineZ: -15
			})
		).toBe(-12.6);
	});

	test('master-tool: H = L − L_m (NIST Table 1 lengths 173.740 and 247.615 mm)', () => {
		expect(
			toolOffsetFromPresetter({
				convention: 'master-tool',
				units: 'mm',
				gaugeLength: 247.615,
				masterGaugeLength: 173.74
			})
		).toBe(73.875);
	});

	test('master-tool from the master reading on the machine: L_m = masterTouchZ − R', () => {
		expect(
			toolOffsetFromPresetter({
				convention: 'master-tool',
				units: 'inch',
				gaugeLength: 2,
				masterTouchZ: -14,
				referenceGaugeLineZ: -15
			})
		).toBe(1);
	});

	test('reference-touch without R: refused with what to do', () => {
		expect(() =>
			toolOffsetFromPresetter({ convention: 'reference-touch', units: 'inch', gaugeLength: 2.4 })
		).toThrow(/record the machine's reference/);
	});

	test('a zero or negative length is refused', () => {
		expect(() =>
			toolOffsetFromPresetter({ convention: 'gauge-length', units: 'mm', gaugeLength: 0 })
		).toThrow(/greater than zero/);
	});

	test('property: the presetter gives the H a touch-off on the machine gives, in every convention', () => {
		// DESIGN.md §2: a touch through a setter s reads R + L + s; readings.ts subtracts s
		const inc = (min: number, max: number) => fc.integer({ min, max }).map((n) => n / 10000);
		fc.assert(
			fc.property(
				fc.constantFrom<Convention>('reference-touch', 'gauge-length', 'master-tool'),
				inc(-180000, -120000),
				inc(10000, 60000),
				inc(10000, 60000),
				inc(0, 40000),
				(convention, R, L, Lm, s) => {
					const touch = toolOffsetFromTouch({
						convention,
						units: 'inch',
						touchZ: Number((R + L + s).toFixed(4)),
						setterHeight: s,
						referenceGaugeLineZ: R,
						masterTouchZ: Number((R + Lm).toFixed(4))
					});
					const preset = toolOffsetFromPresetter({
						convention,
						units: 'inch',
						gaugeLength: L,
						referenceGaugeLineZ: R,
						masterGaugeLength: Lm
					});
					expect(preset).toBe(touch);
				}
			)
		);
	});
});
