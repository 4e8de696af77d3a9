/**
 * Clearance planes for staggered fixtures: the lowest Z, in each fixture's own coordinates,
 * at which the tip clears everything on the table (DESIGN.md §4). The margin is shop policy
 * (no published number exists — SOURCES.md §14); our default is in policy.ts.
 */
import { OffsetInputError } from './errors';
import { resolvePolicy } from './policy';
import { canonicalRegister } from './registers';
import { setupSchema } from './schemas';
import type { PolicyInput, Setup } from './types';
import { fromIncrements, fromMicro, resolutionFor, toMicro } from './units';
import { parseInput } from './validate';

/** Rounds up to the increment: a safety plane is never lowered by rounding. */
function ceilTo(micro: number, resolution: number): number {
	const stepMicro = toMicro(resolution);
	const count = Math.ceil(micro / stepMicro);
	return fromIncrements(count, resolution);
}

/**
 * The lowest safe retract Z for each fixture, in that fixture's own coordinates:
 * tallest obstacle (every fixture's top, every listed obstacle, as heights above the
 * reference) + margin − that fixture's zero height h_k. Rounded up to the setup's increment.
 * Margin: `setup.margin`, else `policy.clearanceMargin`, else our default (1 in / 25 mm).
 * @returns e.g. { G54: 1.75, G55: 3.25 }
 * @throws OffsetInputError for bad numbers or a register used by two fixtures
 */
export function clearancePlanes(setup: Setup, policy?: PolicyInput): Record<string, number> {
	const s = parseInput(setupSchema, setup, 'setup');
	const margin = s.margin ?? resolvePolicy(policy, s.units).clearanceMargin;
	const resolution = resolutionFor(s.units, s.resolution);
	const seen = new Map<string, number>();
	s.fixtures.forEach((f, index) => {
		const r = canonicalRegister(f.register)!;
		if (seen.has(r)) {
			throw OffsetInputError.of(
				`setup.fixtures.${index}.register`,
				f.register,
				`is already used by fixture ${seen.get(r)! + 1} of this setup: each fixture needs its own work offset`
			);
		}
		seen.set(r, index);
	});
	const heights = [
		...s.fixtures.map((f) => toMicro(f.topHeight ?? f.zeroHeight)),
		...s.fixtures.map((f) => toMicro(f.zeroHeight)),
		...(s.obstacles ?? []).map((o) => toMicro(o.height))
	];
	const tallest = Math.max(...heights);
	const planes: Record<string, number> = {};
	for (const f of s.fixtures) {
		planes[canonicalRegister(f.register)!] = ceilTo(
			tallest + toMicro(margin) - toMicro(f.zeroHeight),
			resolution
		);
	}
	return planes;
}

/** The tallest thing on the table, as height above the reference (for display). */
export function tallestObstacle(setup: Setup): number {
	const s = parseInput(setupSchema, setup, 'setup');
	const heights = [
		...s.fixtures.map((f) => toMicro(f.topHeight ?? f.zeroHeight)),
		...(s.obstacles ?? []).map((o) => toMicro(o.height))
	];
	return fromMicro(Math.max(...heights));
}
