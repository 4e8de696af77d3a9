import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import type { Convention } from './conventions';
import { tableFromGeometry } from './convert';
import { OffsetInputError } from './errors';
import {
	reestablishReference,
	referenceGaugeLineZFromTouch,
	toolOffsetFromTouch,
	workOffsetZFromPartTouch,
	workOffsetZFromReadings,
	workOffsetZFromRelative,
	zeroHeightFromReadings
} from './readings';
import type { Machine } from './types';

// Example data (invented): Mill 1, inch, 20 in Z travel, Z home at 0 (common shop practice).
const MILL1: Machine = {
	name: 'Mill 1',
	units: 'inch',
	zTravel: 20,
	convention: 'reference-touch'
};
const R = -15; // gauge line on the reference (invented)

describe('tool length offset from a touch-off', () => {
	test('through a 0.100 in gauge block: subtract the block height', () => {
		// ETSU ENTC 3710 ch. 11: offset = −Z distance from home to the reference surface, found by
		// touching off on a gauge (e.g. a 0.100 in block); DESIGN.md §2: subtract s
		// example reading (invented): −13.9000 with the tip on the 0.100 block
		expect(
			toolOffsetFromTouch({
				convention: 'reference-touch',
				units: 'inch',
				touchZ: -13.9,
				setterHeight: 0.1,
				machine: MILL1
			})
		).toBe(-14);
	});

	test('touched directly: the reading is the reference-touch offset', () => {
		// ETSU ENTC 3710 ch. 11: the offset is the −Z distance from home (machine Z 0) to the
		// reference surface, i.e. the machine Z read with the tip on it
		expect(
			toolOffsetFromTouch({ convention: 'reference-touch', units: 'inch', touchZ: -12.6 })
		).toBe(-12.6);
	});

	test('gauge-length: the length below the gauge line, positive', () => {
		// Modern Machine Shop, "CNC Tech Talk", Jan 2017: the offset is the tool's (positive) length
		// NISTIR 6556 §3.5.11: tool table entries expected positive
		expect(
			toolOffsetFromTouch({
				convention: 'gauge-length',
				units: 'inch',
				touchZ: -12.5,
				setterHeight: 0.1,
				referenceGaugeLineZ: R
			})
		).toBe(2.4);
	});

	test('master-tool: relative to the master touch', () => {
		// DESIGN.md §2 master-tool row: H_i = L_i − L_m, the difference of the two touches on the
		// same surface (common shop practice; no published source names the convention)
		expect(
			toolOffsetFromTouch({
				convention: 'master-tool',
				units: 'inch',
				touchZ: -13.4,
				masterTouchZ: -13
			})
		).toBe(-0.4);
	});

	test('R from a probe of known length', () => {
		// DESIGN.md §2: R is known once a tool or probe of known length is touched on the reference
		expect(
			referenceGaugeLineZFromTouch({
				units: 'inch',
				touchZ: -12.9,
				toolLength: 2,
				setterHeight: 0.1
			})
		).toBe(-15);
	});

	test('refuses a reading outside the machine travel, a missing R, a NaN', () => {
		// Z home at the top of travel, so machine Z lies in [−20, 0] on Mill 1 (common shop practice)
		expect(() =>
			toolOffsetFromTouch({
				convention: 'reference-touch',
				units: 'inch',
				touchZ: -21,
				machine: MILL1
			})
		).toThrow(/touchZ: is outside the Z travel of Mill 1/);
		expect(() =>
			toolOffsetFromTouch({
				convention: 'reference-touch',
				units: 'inch',
				touchZ: 0.5,
				machine: MILL1
			})
		).toThrow(OffsetInputError);
		expect(() =>
			toolOffsetFromTouch({ convention: 'gauge-length', units: 'inch', touchZ: -12 })
		).toThrow(/referenceGaugeLineZ: is needed/);
		expect(() =>
			toolOffsetFromTouch({ convention: 'reference-touch', units: 'inch', touchZ: Number.NaN })
		).toThrow(/input.touchZ: is not a number/);
	});
});

describe('work offset Z', () => {
	// example readings (invented): the same tool reads −13.0000 on the reference, −11.7500 on the part top
	const readings = { units: 'inch' as const, referenceZ: -13, partTopZ: -11.75 };

	test('h from the reference and part-top readings', () => {
		// "Contemporary CNC" notes: G54 Z = the work height above the table (the reference); the
		// same tool touched on both, so its length cancels (DESIGN.md §2: h_k above the reference)
		expect(zeroHeightFromReadings(readings)).toBe(1.25);
		// both through the same 0.100 block: the block cancels
		expect(
			zeroHeightFromReadings({
				...readings,
				referenceZ: -12.9,
				partTopZ: -11.65,
				referenceSetterHeight: 0.1,
				partSetterHeight: 0.1
			})
		).toBe(1.25);
	});

	test('each convention per DESIGN.md §2', () => {
		// "Contemporary CNC" notes: measured to the table, G54 Z = positive work height
		expect(workOffsetZFromReadings({ ...readings, convention: 'reference-touch' })).toBe(1.25);
		// Modern Machine Shop, Jan 2017: gauge-length G54 Z is a large negative distance (R + h)
		expect(
			workOffsetZFromReadings({ ...readings, convention: 'gauge-length', referenceGaugeLineZ: R })
		).toBe(-13.75);
		// DESIGN.md §2 master-tool row: W = R + h + L_m, the master's touch on the part top
		// (common shop practice)
		expect(
			workOffsetZFromReadings({ ...readings, convention: 'master-tool', masterTouchZ: -13 })
		).toBe(-11.75);
	});

	test('relative display zeroed at the reference, read at the part top', () => {
		// common shop practice: zero the relative Z on the reference, touch the part top, read h
		// zeroed directly, read 1.3500 with the tip on a 0.100 block on the part: h = 1.25
		expect(
			workOffsetZFromRelative({
				convention: 'reference-touch',
				units: 'inch',
				relativeReading: 1.35,
				partSetterHeight: 0.1
			})
		).toBe(1.25);
		// zeroed on a 0.100 block, read directly on the part: display shows h − 0.1
		expect(
			workOffsetZFromRelative({
				convention: 'gauge-length',
				units: 'inch',
				relativeReading: 1.15,
				zeroedOnSetterHeight: 0.1,
				referenceGaugeLineZ: R
			})
		).toBe(-13.75);
	});

	test('property: W from a part-top touch + H = the touch reading, in every convention', () => {
		// NIST RS274NGC v3 (NISTIR 6556) composition at program Z0: spindle Z = W + H
		const inc = (min: number, max: number) => fc.integer({ min, max }).map((n) => n / 10000);
		fc.assert(
			fc.property(
				inc(-180_000, -60_000),
				inc(5_000, 50_000),
				inc(0, 40_000),
				inc(0, 2_000),
				fc.constantFrom<Convention>('reference-touch', 'gauge-length', 'master-tool'),
				(r, l, h, s, conv) => {
					const table = tableFromGeometry(
						{
							referenceGaugeLineZ: r,
							toolLengths: { '1': 3, '2': l },
							zeroHeights: { G54: h },
							masterTool: '1'
						},
						conv,
						'inch'
					);
					// tip at the part top on a setter of height s: gauge line at r + h + l + s
					const reading =
						(Math.round(r * 1e4) +
							Math.round(h * 1e4) +
							Math.round(l * 1e4) +
							Math.round(s * 1e4)) /
						1e4;
					const w = workOffsetZFromPartTouch({
						units: 'inch',
						partTopZ: reading,
						setterHeight: s,
						toolOffset: table.tools['2']
					});
					expect(w).toBe(table.work.G54);
				}
			)
		);
	});
});

describe('re-establishing the reference', () => {
	const geometry = {
		referenceGaugeLineZ: R,
		toolLengths: { '1': 2, '2': 1.5 },
		zeroHeights: { G54: 1.25, G55: 3 },
		masterTool: '1'
	};
	const sums = (t: { work: Record<string, number>; tools: Record<string, number> }) =>
		Object.values(t.work).flatMap((w) =>
			Object.values(t.tools).map((h) => Math.round((w + h) * 1e4))
		);

	test('reference-touch, machine shift: tool offsets move, work offsets stay', () => {
		// ETSU ENTC 3710 ch. 11: tool offsets are distances from home to the reference, so a
		// shifted machine Z moves every one by the shift; h (above the reference) stays
		const table = tableFromGeometry(geometry, 'reference-touch', 'inch');
		const r = reestablishReference({
			table,
			previousReferenceZ: -13,
			newReferenceZ: -12.998,
			cause: 'machine-shift'
		});
		expect(r.shift).toBe(0.002);
		expect(r.table.tools).toEqual({ '1': -12.998, '2': -13.498 });
		expect(r.table.work).toEqual(table.work);
		expect(r.changed).toEqual({ work: [], tools: ['1', '2'] });
	});

	test('gauge-length, block re-placed higher: nothing in the table changes', () => {
		// Modern Machine Shop, "CNC Tech Talk", Jan 2017: gauge-length offsets are the tools' own
		// lengths; G54 Z (R + h) stays because the part did not move (common shop practice)
		const table = tableFromGeometry(geometry, 'gauge-length', 'inch');
		const r = reestablishReference({
			table,
			previousReferenceZ: -13,
			newReferenceZ: -12.9,
			cause: 'surface-moved'
		});
		expect(r.table).toEqual(table);
		expect(r.changed).toEqual({ work: [], tools: [] });
	});

	test('property: a machine shift moves every spindle Z by d; a moved block moves none', () => {
		// NISTIR 6556 composition: spindle Z at program Z0 = W + H; DESIGN.md §2 invariant W + H =
		// R + h + L, so only a shift of the machine's Z moves it
		fc.assert(
			fc.property(
				fc.constantFrom<Convention>('reference-touch', 'gauge-length', 'master-tool'),
				fc.integer({ min: -500, max: 500 }),
				(conv, dInc) => {
					const table = tableFromGeometry(geometry, conv, 'inch');
					const d = dInc / 10000;
					const shifted = reestablishReference({
						table,
						previousReferenceZ: -13,
						newReferenceZ: (-130000 + dInc) / 1e4,
						cause: 'machine-shift'
					});
					expect(sums(shifted.table)).toEqual(sums(table).map((z) => z + Math.round(d * 1e4)));
					const moved = reestablishReference({
						table,
						previousReferenceZ: -13,
						newReferenceZ: (-130000 + dInc) / 1e4,
						cause: 'surface-moved'
					});
					expect(sums(moved.table)).toEqual(sums(table));
				}
			)
		);
	});
});
