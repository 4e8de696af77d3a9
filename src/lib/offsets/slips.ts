/**
 * Typing slips: which slip turns the value that was meant into the value that was typed, and
 * what the meant value most likely was. One implementation for every place a number is typed:
 * offsets against their history (checkOffsets), machine Z against the last reading of the same
 * tool, block heights and gauge stacks against the offset they move, and any length outside
 * the range it must lie in. The slips are common shop practice (no published list): a minus
 * sign added or dropped, a value typed in the other unit (1 in = 25.4 mm exactly, NIST SP 811),
 * the decimal point one place off, two neighbouring digits swapped.
 */
import { formatLength, formatWithUnits } from './format';
import type { Policy } from './policy';
import { MM_PER_INCH, roundToResolution, toMicro, type Units } from './units';

/** Finding kinds that name a slip. */
export type SlipKind = 'sign-flip' | 'unit-slip' | 'decimal-slip' | 'transposed-digits';

/**
 * What happened to the meant value: `sign` (minus added or dropped), `×25.4` (mm typed where
 * inch was meant), `÷25.4` (inch typed where mm was meant), `×10` / `÷10` (decimal point one
 * place right / left), `transposed` (two neighbouring digits swapped).
 */
export type SlipRule = 'sign' | '×25.4' | '÷25.4' | '×10' | '÷10' | 'transposed';

export interface NamedSlip {
	kind: SlipKind;
	rule: SlipRule;
	/** The value that was most likely meant, at the resolution. */
	corrected: number;
	/** Plain words: "the decimal point one place to the right (×10)". */
	words: string;
}

/** How each slip reads in a message (common shop practice). */
export const SLIP_WORDS: Readonly<Record<SlipRule, string>> = {
	sign: 'a minus sign added or dropped',
	'×25.4': 'millimetres typed where inches were meant (×25.4)',
	'÷25.4': 'inches typed where millimetres were meant (÷25.4)',
	'×10': 'the decimal point one place too far right (×10)',
	'÷10': 'the decimal point one place too far left (÷10)',
	transposed: 'two neighbouring digits swapped'
};

const KIND_OF: Readonly<Record<SlipRule, SlipKind>> = {
	sign: 'sign-flip',
	'×25.4': 'unit-slip',
	'÷25.4': 'unit-slip',
	'×10': 'decimal-slip',
	'÷10': 'decimal-slip',
	transposed: 'transposed-digits'
};

/** The meant value from the typed one, undoing each rule (transposed needs the other value). */
const UNDO: Readonly<Record<Exclude<SlipRule, 'transposed'>, (v: number) => number>> = {
	sign: (v) => -v,
	'×25.4': (v) => v / MM_PER_INCH,
	'÷25.4': (v) => v * MM_PER_INCH,
	'×10': (v) => v / 10,
	'÷10': (v) => v * 10
};

function near(ratio: number, target: number, tolerance: number): boolean {
	return Math.abs(ratio - target) <= target * tolerance;
}

/** Digits of |v| at the resolution with the point removed, e.g. 15.2345 → "152345". */
function digitsOf(v: number, units: Units, resolution: number): string {
	return formatLength(Math.abs(v), units, resolution).replace('.', '');
}

/** True when a and b differ only by two neighbouring digits swapped. */
export function isAdjacentTransposition(a: string, b: string): boolean {
	if (a.length !== b.length || a === b) return false;
	const diff: number[] = [];
	for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) diff.push(i);
	return (
		diff.length === 2 &&
		diff[1] === diff[0] + 1 &&
		a[diff[0]] === b[diff[1]] &&
		a[diff[1]] === b[diff[0]]
	);
}

/** Which typing slip turns `previous` into `current`, if any (the detector every check uses). */
export function slipKind(
	current: number,
	previous: number,
	units: Units,
	resolution: number,
	policy: Pick<Policy, 'minSlipMagnitude' | 'slipTolerance' | 'jumpTolerance'>
): SlipKind | null {
	return slipRule(current, previous, units, resolution, policy)?.kind ?? null;
}

/** The slip and its direction that turns `previous` into `current`, if any. */
function slipRule(
	current: number,
	previous: number,
	units: Units,
	resolution: number,
	policy: Pick<Policy, 'minSlipMagnitude' | 'slipTolerance' | 'jumpTolerance'>
): { kind: SlipKind; rule: SlipRule } | null {
	const c = toMicro(current);
	const p = toMicro(previous);
	if (c === p || c === 0 || p === 0) return null;
	const floor = toMicro(policy.minSlipMagnitude);
	if (Math.abs(p) < floor && Math.abs(c) < floor) return null;
	const tol = policy.slipTolerance;
	if (
		Math.sign(c) !== Math.sign(p) &&
		Math.abs(Math.abs(c) - Math.abs(p)) <= toMicro(policy.jumpTolerance)
	) {
		return { kind: 'sign-flip', rule: 'sign' };
	}
	const ratio = Math.abs(c) / Math.abs(p);
	if (near(ratio, MM_PER_INCH, tol)) return { kind: 'unit-slip', rule: '×25.4' };
	if (near(ratio, 1 / MM_PER_INCH, tol)) return { kind: 'unit-slip', rule: '÷25.4' };
	if (near(ratio, 10, tol)) return { kind: 'decimal-slip', rule: '×10' };
	if (near(ratio, 0.1, tol)) return { kind: 'decimal-slip', rule: '÷10' };
	if (
		Math.sign(c) === Math.sign(p) &&
		isAdjacentTransposition(
			digitsOf(current, units, resolution),
			digitsOf(previous, units, resolution)
		)
	) {
		return { kind: 'transposed-digits', rule: 'transposed' };
	}
	return null;
}

/**
 * Names the slip that turns `previous` (the value expected) into `typed`, with the value most
 * likely meant. The sign is kept from the typed value except for a sign slip (a ×10 of a
 * negative value stays negative).
 */
export function nameSlip(
	typed: number,
	previous: number,
	units: Units,
	resolution: number,
	policy: Pick<Policy, 'minSlipMagnitude' | 'slipTolerance' | 'jumpTolerance'>
): NamedSlip | null {
	const found = slipRule(typed, previous, units, resolution, policy);
	if (!found) return null;
	const corrected =
		found.rule === 'transposed' ? previous : roundToResolution(UNDO[found.rule](typed), resolution);
	return { ...found, corrected, words: SLIP_WORDS[found.rule] };
}

/**
 * For a typed length outside the range it must lie in (a machine Z beyond the travel, a block
 * taller than the machine can hold), the slips whose undoing brings it inside, most likely
 * first: sign, then decimal point, then units (only the unit slip this machine's unit allows:
 * millimetres typed on an inch machine, inches typed on a metric one).
 */
export function slipsIntoRange(
	typed: number,
	range: { min: number; max: number },
	units: Units,
	resolution: number
): NamedSlip[] {
	const rules: Exclude<SlipRule, 'transposed'>[] = [
		'sign',
		'×10',
		'÷10',
		units === 'inch' ? '×25.4' : '÷25.4'
	];
	const inside = (v: number) =>
		toMicro(v) >= toMicro(range.min) && toMicro(v) <= toMicro(range.max) && toMicro(v) !== 0;
	if (inside(typed)) return [];
	const out: NamedSlip[] = [];
	for (const rule of rules) {
		const corrected = roundToResolution(UNDO[rule](typed), resolution);
		if (inside(corrected))
			out.push({ kind: KIND_OF[rule], rule, corrected, words: SLIP_WORDS[rule] });
	}
	return out;
}

/** "probably the decimal point one place too far right (×10): -14.7502 in was likely meant". */
export function describeSlip(slip: NamedSlip, units: Units, resolution: number): string {
	return `probably ${slip.words}: ${formatWithUnits(slip.corrected, units, resolution)} was likely meant`;
}

/** Decimals a value needs ("1.0000" → 0, "2.54" → 2). */
function decimalsUsed(v: number): number {
	const t = String(Math.abs(v));
	return t.includes('.') ? t.split('.')[1].length : 0;
}

/** What a block-height slip does to the offset it feeds. */
export interface BlockSlip extends NamedSlip {
	/** The offset the corrected block would give. */
	correctedOffset: number;
	/** How far the typed block moved the offset from its last value. */
	moved: number;
}

/**
 * A block height (a gauge block, a stack of them, a setter or 1-2-3 block) typed with a slip.
 * Every offset from a touch falls by exactly the block height (tip s above the surface,
 * docs/OFFSETS.md §4), so a block typed `b` instead of `b'` moves the offset by b' − b.
 * Named when the typed block moves the offset more than the shop's jump limit from its last
 * value and undoing a slip of the block brings it back within that limit; or, with no last
 * value, when the block is taller than the machine's Z travel and undoing a slip fits it.
 */
export function blockHeightSlip(input: {
	block: number;
	offset: number;
	previousOffset: number | null;
	zTravel: number;
	units: Units;
	resolution: number;
	policy: Pick<Policy, 'jumpTolerance'>;
}): BlockSlip | null {
	const { block, offset, previousOffset, units, resolution } = input;
	if (block <= 0) return null;
	const rules: Exclude<SlipRule, 'transposed'>[] = [
		'×10',
		'÷10',
		units === 'inch' ? '×25.4' : '÷25.4'
	];
	const limit = toMicro(input.policy.jumpTolerance);
	const offsetWith = (b: number) => roundToResolution(offset + block - b, resolution);
	if (previousOffset !== null) {
		const moved = toMicro(offset) - toMicro(previousOffset);
		if (Math.abs(moved) <= limit) return null;
		for (const rule of rules) {
			const corrected = roundToResolution(UNDO[rule](block), resolution);
			if (corrected <= 0) continue;
			const fixed = offsetWith(corrected);
			if (Math.abs(toMicro(fixed) - toMicro(previousOffset)) <= limit) {
				return {
					kind: KIND_OF[rule],
					rule,
					corrected,
					words: SLIP_WORDS[rule],
					correctedOffset: fixed,
					moved: roundToResolution(offset - previousOffset, resolution)
				};
			}
		}
		return null;
	}
	// Blocks come in round sizes (common shop practice): the roundest meant value first, so
	// 25.4 on an inch machine reads as 1 in typed in millimetres, not 2.54 in.
	const [slip] = slipsIntoRange(block, { min: 0, max: input.zTravel }, units, resolution)
		.filter((s) => s.rule !== 'sign')
		.sort((a, b) => decimalsUsed(a.corrected) - decimalsUsed(b.corrected));
	return slip
		? {
				...slip,
				correctedOffset: offsetWith(slip.corrected),
				moved: roundToResolution(slip.corrected - block, resolution)
			}
		: null;
}
