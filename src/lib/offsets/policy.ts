/**
 * Shop thresholds for the checks and the clearance plane. No published numbers exist for any
 * of these (SOURCES.md §14): every default below is **our default, shop policy**, chosen
 * cautious and easy to explain, and a shop may change each one.
 */
import { policySchema } from './schemas';
import type { PolicyInput } from './types';
import { toUnits, type Units } from './units';
import { parseInput } from './validate';

/** Thresholds with every field filled, lengths in `units`. */
export interface Policy {
	units: Units;
	/**
	 * Largest change from the last recorded value with no tool change before `jump` fires.
	 * Default 0.0050 in / 0.13 mm: re-touching the same tool or fixture repeats within a few
	 * tenths, and wear between checks is far smaller, so 5 thousandths is unexplained.
	 */
	jumpTolerance: number;
	/**
	 * Added above the tallest obstacle for the clearance plane. Default 1.0000 in / 25 mm:
	 * clears a clamp nut, a chip pile or a part sitting a little proud, and a plane an inch
	 * up is easy to see and check by eye.
	 */
	clearanceMargin: number;
	/**
	 * Relative closeness to a slip ratio (×25.4, ×10, or the sign turned over).
	 * Default 0.02 (2 %): a value retyped in the wrong unit or with a shifted point lands
	 * within rounding of the exact ratio; 2 % also allows a small real change at the same time.
	 */
	slipTolerance: number;
	/**
	 * Values smaller than this (in size) are not tested for slips: near zero every ratio is
	 * noise. Default 0.0100 in / 0.25 mm.
	 */
	minSlipMagnitude: number;
	/**
	 * Age after which a tool length is `stale-age`. Default 30 days: a tool left in its holder
	 * keeps its length, but a month covers regrinds and holder swaps that went unrecorded.
	 */
	toolMaxAgeDays: number;
	/**
	 * Age after which a work offset is `stale-age`. Default 7 days: a fixture left on the table
	 * for a week has likely been bumped, re-clamped or cleaned under.
	 */
	workMaxAgeDays: number;
}

/** Our defaults (shop policy), per unit so metric shops get round metric numbers. */
export const DEFAULT_POLICY: Readonly<Record<Units, Policy>> = {
	inch: {
		units: 'inch',
		jumpTolerance: 0.005,
		clearanceMargin: 1,
		slipTolerance: 0.02,
		minSlipMagnitude: 0.01,
		toolMaxAgeDays: 30,
		workMaxAgeDays: 7
	},
	mm: {
		units: 'mm',
		jumpTolerance: 0.13,
		clearanceMargin: 25,
		slipTolerance: 0.02,
		minSlipMagnitude: 0.25,
		toolMaxAgeDays: 30,
		workMaxAgeDays: 7
	}
};

const LENGTH_FIELDS = ['jumpTolerance', 'clearanceMargin', 'minSlipMagnitude'] as const;

/**
 * A complete policy in `units`: the shop's fields over our defaults for those units.
 * Lengths given in another unit (`policy.units`) are converted exactly.
 * @throws OffsetInputError for a bad field
 */
export function resolvePolicy(policy: PolicyInput | undefined, units: Units): Policy {
	const p = parseInput(policySchema, policy ?? {}, 'policy');
	const out: Policy = { ...DEFAULT_POLICY[units] };
	const from = p.units ?? units;
	for (const field of LENGTH_FIELDS) {
		const v = p[field];
		if (v !== undefined) out[field] = toUnits(v, from, units);
	}
	if (p.slipTolerance !== undefined) out.slipTolerance = p.slipTolerance;
	if (p.toolMaxAgeDays !== undefined) out.toolMaxAgeDays = p.toolMaxAgeDays;
	if (p.workMaxAgeDays !== undefined) out.workMaxAgeDays = p.workMaxAgeDays;
	return out;
}
