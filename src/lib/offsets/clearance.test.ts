import { describe, expect, test } from 'vitest';
import { clearancePlanes } from './clearance';
import { OffsetInputError } from './errors';
import type { Setup } from './types';

// Example data (invented): pump housing op A/B on Mill 1, two fixtures of different heights.
const SETUP: Setup = {
	id: 'pump',
	units: 'inch',
	fixtures: [
		{ register: 'G54', zeroHeight: 1.25 }, // op A part top in a low vise
		{ register: 'G55', zeroHeight: 4.5, topHeight: 4.5 } // op B on a riser
	],
	obstacles: [{ label: 'strap clamp', height: 2 }]
};

describe('clearancePlanes', () => {
	test('tallest obstacle + margin − each fixture’s zero height', () => {
		// DESIGN.md §4; margin: our default 1 in (shop policy — no published number, SOURCES.md §14)
		// tallest = 4.5 (G55 part top); G54: 4.5 + 1 − 1.25 = 4.25; G55: 4.5 + 1 − 4.5 = 1
		expect(clearancePlanes(SETUP)).toEqual({ G54: 4.25, G55: 1 });
	});

	test('a tall clamp raises every plane; the shop margin is used', () => {
		// DESIGN.md §4 as above, with the shop's own margin (shop policy): 6 + 0.5 − h_k
		const s = { ...SETUP, margin: 0.5, obstacles: [{ label: 'vise jaw', height: 6 }] };
		expect(clearancePlanes(s)).toEqual({ G54: 5.25, G55: 2 });
	});

	test('policy margin in other units is converted exactly', () => {
		// NIST SP 811: 25.4 mm = 1 in
		expect(clearancePlanes(SETUP, { units: 'mm', clearanceMargin: 25.4 })).toEqual({
			G54: 4.25,
			G55: 1
		});
	});

	test('rounded up, never down, to the increment', () => {
		// example: margin 0.00004 in would round to 0 by half-away; a safety plane rounds up
		expect(clearancePlanes({ ...SETUP, margin: 0.00004 }).G55).toBe(0.0001);
	});

	test('metric setup, metric default margin (25 mm, our default)', () => {
		// Example data (invented): metric flange on Mill 3
		const planes = clearancePlanes({
			units: 'mm',
			fixtures: [{ register: 'G54.1 P2', zeroHeight: 40 }]
		});
		expect(planes).toEqual({ 'G54.1 P2': 25 });
	});

	test('refuses a register shared by two fixtures and bad numbers', () => {
		const dup = { ...SETUP, fixtures: [SETUP.fixtures[0], { register: 'g54', zeroHeight: 2 }] };
		expect(() => clearancePlanes(dup)).toThrow(/setup.fixtures.1.register/);
		expect(() => clearancePlanes({ ...SETUP, obstacles: [{ height: Number.NaN }] })).toThrow(
			OffsetInputError
		);
		expect(() =>
			clearancePlanes({ ...SETUP, fixtures: [{ register: 'G54.1 P0', zeroHeight: 1 }] })
		).toThrow(/G54.1 P1–P48/);
	});
});
