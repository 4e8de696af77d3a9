import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { centreFromEdges, edgePosition } from './edges';
import { OffsetInputError } from './errors';

// Example readings are invented (Mill 1 style, inch; Mill 3 style, mm).
describe('edge position from one touch', () => {
	test('approached from the minus side: edge = reading + radius', () => {
		// common shop practice: the probe centre is one radius short of the edge it touches
		expect(
			edgePosition({
				units: 'inch',
				touch: { machineCoordinate: -10.1, approachedFrom: 'minus' },
				probeDiameter: 0.2
			})
		).toBe(-10);
	});

	test('approached from the plus side: edge = reading − radius', () => {
		// common shop practice
		expect(
			edgePosition({
				units: 'inch',
				touch: { machineCoordinate: -7.9, approachedFrom: 'plus' },
				probeDiameter: 0.2
			})
		).toBe(-8);
	});

	test('mm: a 6 mm probe tip, both sides', () => {
		// common shop practice
		expect(
			edgePosition({
				units: 'mm',
				touch: { machineCoordinate: -250.5, approachedFrom: 'minus' },
				probeDiameter: 6
			})
		).toBe(-247.5);
		expect(
			edgePosition({
				units: 'mm',
				touch: { machineCoordinate: -250.5, approachedFrom: 'plus' },
				probeDiameter: 6
			})
		).toBe(-253.5);
	});

	test('an odd probe diameter keeps its half increment until the final rounding', () => {
		// 0.2001 in diameter → radius 0.10005; −10.1 + 0.10005 = −9.99995 → −10.0000 (half away
		// from zero at 0.0001 in, common shop practice for the control's increment)
		expect(
			edgePosition({
				units: 'inch',
				touch: { machineCoordinate: -10.1, approachedFrom: 'minus' },
				probeDiameter: 0.2001
			})
		).toBe(-10);
	});

	test('no probe diameter: refused, naming the field', () => {
		expect(() =>
			edgePosition({
				units: 'inch',
				touch: { machineCoordinate: -10.1, approachedFrom: 'minus' },
				probeDiameter: undefined
			})
		).toThrow(/probeDiameter: is needed/);
	});

	test('a probe diameter typed in mm on an inch machine is refused', () => {
		expect(() =>
			edgePosition({
				units: 'inch',
				touch: { machineCoordinate: -10.1, approachedFrom: 'minus' },
				probeDiameter: 6
			})
		).toThrow(/check the units/);
	});
});

describe('centre from two opposite edges', () => {
	test('a boss: low edge from the minus side, high edge from the plus side', () => {
		// common shop practice: centre = mean of the two edges
		const r = centreFromEdges({
			units: 'inch',
			axis: 'X',
			feature: 'outside',
			first: { machineCoordinate: -12.1, approachedFrom: 'minus' },
			second: { machineCoordinate: -7.9, approachedFrom: 'plus' },
			probeDiameter: 0.2
		});
		expect(r).toEqual({ centre: -10, lowEdge: -12, highEdge: -8, width: 4 });
	});

	test('a bore: the probe inside, walls touched from the plus side (low) and minus side (high)', () => {
		// common shop practice
		const r = centreFromEdges({
			units: 'mm',
			axis: 'Y',
			feature: 'inside',
			first: { machineCoordinate: -180, approachedFrom: 'plus' },
			second: { machineCoordinate: -140, approachedFrom: 'minus' },
			probeDiameter: 6
		});
		expect(r).toEqual({ centre: -160, lowEdge: -183, highEdge: -137, width: 46 });
	});

	test('the order the edges were touched in does not matter', () => {
		const a = centreFromEdges({
			units: 'inch',
			axis: 'X',
			feature: 'outside',
			first: { machineCoordinate: -7.9, approachedFrom: 'plus' },
			second: { machineCoordinate: -12.1, approachedFrom: 'minus' },
			probeDiameter: 0.2
		});
		expect(a.centre).toBe(-10);
	});

	test('both edges from the same side: refused (a centre needs one from each side)', () => {
		expect(() =>
			centreFromEdges({
				units: 'inch',
				axis: 'X',
				feature: 'outside',
				first: { machineCoordinate: -12.1, approachedFrom: 'minus' },
				second: { machineCoordinate: -7.9, approachedFrom: 'minus' },
				probeDiameter: 0.2
			})
		).toThrow(/second.approachedFrom: is the same side/);
	});

	test('sides that fit a bore but the feature says boss: refused with the reason', () => {
		try {
			centreFromEdges({
				units: 'inch',
				axis: 'X',
				feature: 'outside',
				first: { machineCoordinate: -12.1, approachedFrom: 'plus' },
				second: { machineCoordinate: -7.9, approachedFrom: 'minus' },
				probeDiameter: 0.2
			});
			expect.unreachable();
		} catch (e) {
			expect(e).toBeInstanceOf(OffsetInputError);
			expect((e as OffsetInputError).issues[0].field).toBe('first.approachedFrom');
			expect((e as OffsetInputError).issues[0].message).toMatch(/does not fit a boss/);
		}
	});

	test('a boss narrower than the probe leaves no room: refused', () => {
		expect(() =>
			centreFromEdges({
				units: 'inch',
				axis: 'X',
				feature: 'outside',
				first: { machineCoordinate: -10.05, approachedFrom: 'minus' },
				second: { machineCoordinate: -9.95, approachedFrom: 'plus' },
				probeDiameter: 0.2
			})
		).toThrow(/leaves no room/);
	});

	test('property: the centre is the same for any probe diameter when the edges are the same', () => {
		// common shop practice: the radius adds on one side and subtracts on the other
		fc.assert(
			fc.property(
				fc.integer({ min: -150000, max: -50000 }),
				fc.integer({ min: 1000, max: 40000 }),
				fc.integer({ min: 100, max: 5000 }),
				(lowEdge, width, dia) => {
					const lo = lowEdge / 10000;
					const hi = (lowEdge + width) / 10000;
					const d = dia / 10000;
					const r = centreFromEdges({
						units: 'inch',
						axis: 'X',
						feature: 'outside',
						first: { machineCoordinate: lo - d / 2, approachedFrom: 'minus' },
						second: { machineCoordinate: hi + d / 2, approachedFrom: 'plus' },
						probeDiameter: d
					});
					expect(r.lowEdge).toBeCloseTo(lo, 4);
					expect(r.highEdge).toBeCloseTo(hi, 4);
					expect(Math.abs(r.centre - (lo + hi) / 2)).toBeLessThanOrEqual(0.0001);
				}
			)
		);
	});
});
