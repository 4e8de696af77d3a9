/**
 * Example data for the program check tests (invented, DESIGN.md §9): the pump housing ops A/B
 * on Mill 1 (inch, 20 in Z travel) at two fixtures of different heights.
 */
import type { ProgramSetup } from './schema';

/**
 * Reference-touch table (DESIGN.md §2): W_k = h_k, H_i = R + L_i. G54 is op A in a vise
 * (part top 1.25 in above the reference), G55 op B on a riser (4.5 in), a strap clamp 2 in.
 * Tallest obstacle 4.5 + our default 1 in margin → clearance height 5.5 in above the
 * reference; planes G54 Z 4.25, G55 Z 1.0 (clearancePlanes).
 */
export const PUMP: ProgramSetup = {
	machine: { name: 'Mill 1', units: 'inch', zTravel: 20 },
	table: {
		convention: 'reference-touch',
		units: 'inch',
		work: { G54: 1.25, G55: 4.5, G57: 2 },
		tools: { '1': -15, '2': -14.5 }
	},
	setup: {
		id: 'pump-ab',
		units: 'inch',
		fixtures: [
			{ register: 'G54', zeroHeight: 1.25 },
			{ register: 'G55', zeroHeight: 4.5 }
		],
		obstacles: [{ label: 'strap clamp', height: 2 }]
	}
};

/** Builds a program from lines (LF), so tests can count lines by index. */
export const program = (...lines: string[]): string => lines.join('\n') + '\n';

/**
 * A clean two-fixture program: retracts to each fixture's clearance plane before moving
 * sideways to the other (common shop practice). Line numbers in the comments.
 */
export const CLEAN = [
	'%', // 1
	'O1001 (PUMP HOUSING OP A/B)', // 2
	'G20 G17 G40 G80 G90', // 3
	'T1 M6', // 4
	'G54 G0 X1. Y1.', // 5
	'G43 H1 Z4.5', // 6  tip 5.75 above the reference
	'Z0.1', // 7
	'G1 Z-0.25 F20.', // 8  tip 1.0
	'X2.', // 9
	'G0 Z4.5', // 10 back to 5.75 (≥ 5.5)
	'G55 X10. Y1.', // 11 sideways to op B at 5.75
	'Z0.1', // 12
	'G1 Z-0.25 F20.', // 13 tip 4.25
	'G0 Z1.5', // 14 tip 6.0
	'G91 G28 Z0.', // 15
	'M30', // 16
	'%' // 17
];
