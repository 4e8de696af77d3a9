/**
 * The setup the benchmark checks against: pump housing ops A/B on Mill 1 (inch, 20 in Z
 * travel), G54 low in a vise and G55 on a riser, reference-touch offsets. Example data,
 * invented (DESIGN.md §9).
 */
import type { ProgramSetup } from '../src/lib/offsets';

export const BENCH_SETUP: ProgramSetup = {
	machine: { name: 'Mill 1', units: 'inch', zTravel: 20, controlStyle: 'iso' },
	table: {
		convention: 'reference-touch',
		units: 'inch',
		work: { G54: 1.25, G55: 3.5 },
		tools: { '1': -14.8123, '2': -13.9051, '3': -15.204, '4': -12.6678 }
	},
	setup: {
		units: 'inch',
		fixtures: [
			{ register: 'G54', zeroHeight: 1.25 },
			{ register: 'G55', zeroHeight: 3.5 }
		],
		obstacles: [{ label: 'strap clamp', height: 2 }]
	},
	// As the server checks: the picture of the tip's heights is kept too.
	profile: true
};
