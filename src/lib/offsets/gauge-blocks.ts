/**
 * Gauge-block stacks by the handbook method: clear the last decimal digit first
 * (Starrett-Webber, "How to Select Gage Blocks for Use in Combinations"): take the block of
 * the finest series that zeroes the last digit (and leaves a remainder the next series can
 * reach), then the next series, and finish the whole-number part from the coarse blocks.
 * Where a series offers several blocks we try them all (and pairs), and the coarse part is
 * solved exactly, so the stack returned is the shortest the method can reach.
 */
import { OffsetInputError } from './errors';
import { findGaugeSet, GAUGE_SETS, type GaugeSet } from './gauge-sets';
import { fromIncrements, toIncrements, UNIT_LABEL } from './units';
import { requireFinite } from './validate';

function gcd(a: number, b: number): number {
	while (b) [a, b] = [b, a % b];
	return a;
}

/** Fewest blocks from `blocks` (each used once) summing to `target`; null if none. */
function coarse(
	target: number,
	blocks: number[],
	memo: Map<number, number[] | null>
): number[] | null {
	if (memo.has(target)) return memo.get(target)!;
	const g = blocks.reduce(gcd);
	if (target % g !== 0) return null;
	const goal = target / g;
	const items = blocks.map((b) => b / g);
	const total = items.reduce((a, b) => a + b, 0);
	if (goal > total) {
		memo.set(target, null);
		return null;
	}
	const INF = 255;
	const best = new Uint8Array(goal + 1).fill(INF);
	best[0] = 0;
	const taken = items.map(() => new Uint8Array(goal + 1));
	items.forEach((item, k) => {
		for (let s = goal; s >= item; s--) {
			if (best[s - item] !== INF && best[s - item] + 1 < best[s]) {
				best[s] = best[s - item] + 1;
				taken[k][s] = 1;
			}
		}
	});
	let result: number[] | null = null;
	if (best[goal] !== INF) {
		result = [];
		let s = goal;
		for (let k = items.length - 1; k >= 0 && s > 0; k--) {
			if (taken[k][s]) {
				result.push(blocks[k]);
				s -= items[k];
			}
		}
		result.sort((a, b) => a - b);
	}
	memo.set(target, result);
	return result;
}

function solve(
	target: number,
	set: GaugeSet,
	index: number,
	memo: Map<number, number[] | null>
): number[] | null {
	const series = set.series;
	if (index === series.length - 1) return coarse(target, series[index], memo);
	const later = series
		.slice(index + 1)
		.flat()
		.reduce(gcd);
	const blocks = series[index];
	// None, then single blocks, then pairs: on a tie the handbook's one block per digit wins.
	const options: number[][] = [[], ...blocks.map((b) => [b])];
	for (let a = 0; a < blocks.length; a++) {
		for (let b = a + 1; b < blocks.length; b++) options.push([blocks[a], blocks[b]]);
	}
	let best: number[] | null = null;
	for (const chosen of options) {
		const rest = target - chosen.reduce((x, y) => x + y, 0);
		if (rest < 0 || rest % later !== 0) continue;
		if (best && chosen.length >= best.length) continue;
		const tail = rest === 0 ? [] : solve(rest, set, index + 1, memo);
		if (tail && (!best || chosen.length + tail.length < best.length)) best = [...chosen, ...tail];
	}
	return best;
}

/**
 * The blocks that wring to `target`, in the set's units, finest first
 * (e.g. 3.9762 in → [0.1002, 0.126, 0.75, 3]).
 * @param setName 'inch-81' (or '81'), 'M87', 'M88', 'M112'
 * @throws OffsetInputError for an unknown set, a target that is not a positive multiple of
 *   the set's smallest step, or a height no combination of the set's blocks can build
 */
export function gaugeStack(target: number, setName: string): number[] {
	const set = findGaugeSet(setName);
	if (!set) {
		throw OffsetInputError.of(
			'setName',
			setName,
			`is not a gauge-block set we know; use one of ${Object.keys(GAUGE_SETS).join(', ')}`
		);
	}
	requireFinite(target, 'target');
	const unit = UNIT_LABEL[set.units];
	if (target <= 0) throw OffsetInputError.of('target', target, 'must be greater than zero');
	const count = toIncrements(target, set.step);
	if (fromIncrements(count, set.step) !== target) {
		throw OffsetInputError.of(
			'target',
			target,
			`is not a multiple of ${set.step} ${unit}, the finest step the ${set.label} can build`
		);
	}
	const stack = solve(count, set, 0, new Map());
	if (!stack) {
		const all = set.series.flat();
		const total = fromIncrements(
			all.reduce((a, b) => a + b, 0),
			set.step
		);
		throw OffsetInputError.of(
			'target',
			target,
			target > total
				? `is taller than every block of the ${set.label} stacked together (${total} ${unit})`
				: `cannot be built from the ${set.label}: no combination of its blocks wrings to exactly ${target} ${unit}`
		);
	}
	return stack.map((c) => fromIncrements(c, set.step));
}
