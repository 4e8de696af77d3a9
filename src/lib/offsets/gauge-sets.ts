/**
 * Standard gauge-block sets, as integer counts of each set's smallest step so every sum is
 * exact. Each set is split into series from fine to coarse; the handbook method picks from the
 * finest series first (gauge-blocks.ts).
 * - 81-piece inch: .1001–.1009, .101–.149, .050–.950 by .050, 1–4 in (a metrology supplier's
 *   "Jo Block Stacks" page, SOURCES.md §10).
 * - M87, M88, M112 metric: compositions from memory (SOURCES.md §12, [memory]).
 */
import { fromIncrements, type Units } from './units';

/** One gauge-block set. Block sizes are counts of `step`. */
export interface GaugeSet {
	name: string;
	label: string;
	units: Units;
	/** Smallest step between sizes: 0.0001 in, 0.001 mm, or 0.0005 mm for sets with 1.0005. */
	step: number;
	/** Series from finest to coarsest; the last one is solved exactly by counting. */
	series: number[][];
}

function range(from: number, to: number, by: number): number[] {
	const out: number[] = [];
	for (let v = from; v <= to; v += by) out.push(v);
	return out;
}

/** The sets we know, by name. */
export const GAUGE_SETS: Readonly<Record<string, GaugeSet>> = {
	'inch-81': {
		name: 'inch-81',
		label: '81-piece inch set',
		units: 'inch',
		step: 0.0001,
		series: [
			range(1001, 1009, 1), // .1001–.1009
			range(1010, 1490, 10), // .101–.149
			[...range(500, 9500, 500), ...range(10000, 40000, 10000)] // .050–.950, 1–4 in
		]
	},
	M87: {
		name: 'M87',
		label: 'M87 metric set (87 pieces)',
		units: 'mm',
		step: 0.001,
		series: [
			range(1001, 1009, 1), // 1.001–1.009
			range(1010, 1490, 10), // 1.01–1.49
			[...range(500, 9500, 500), ...range(10000, 100000, 10000)] // 0.5–9.5, 10–100
		]
	},
	M88: {
		name: 'M88',
		label: 'M88 metric set (88 pieces)',
		units: 'mm',
		step: 0.0005,
		series: [
			[2001], // 1.0005
			range(2002, 2018, 2), // 1.001–1.009
			range(2020, 2980, 20), // 1.01–1.49
			[...range(1000, 19000, 1000), ...range(20000, 200000, 20000)] // 0.5–9.5, 10–100
		]
	},
	M112: {
		name: 'M112',
		label: 'M112 metric set (112 pieces)',
		units: 'mm',
		step: 0.0005,
		series: [
			[2001], // 1.0005
			range(2002, 2018, 2), // 1.001–1.009
			range(2020, 2980, 20), // 1.01–1.49
			[...range(1000, 49000, 1000), 50000, 100000, 150000, 200000] // 0.5–24.5, 25, 50, 75, 100
		]
	}
};

const ALIASES: Record<string, string> = {
	'81': 'inch-81',
	'INCH-81': 'inch-81',
	INCH81: 'inch-81',
	M87: 'M87',
	M88: 'M88',
	M112: 'M112'
};

/** The set for a name ("inch-81" or "81", "M87", "M88", "M112"; any case), or undefined. */
export function findGaugeSet(name: string): GaugeSet | undefined {
	if (typeof name !== 'string') return undefined;
	const key = ALIASES[name.trim().toUpperCase()];
	return key ? GAUGE_SETS[key] : undefined;
}

/** Every block of a set, in the set's units (for listing and tests). */
export function gaugeSetBlocks(set: GaugeSet): number[] {
	return set.series.flat().map((c) => fromIncrements(c, set.step));
}
