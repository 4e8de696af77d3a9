/**
 * X and Y work offsets from edge readings: a machine coordinate read with an edge finder or a
 * probe of known diameter touching an edge of the part, and the side the edge was approached
 * from.
 *
 * - The probe's centre is on the spindle axis, so at the touch the edge is one radius away
 *   from the reading: approached from the minus side (the probe moved in + toward the edge)
 *   the edge is at reading + radius; approached from the plus side, at reading − radius
 *   (common shop practice).
 * - A centre is the mean of two opposite edges (common shop practice).
 * - A work offset's X and Y are the machine coordinates of the program zero: G10 L2 sets a
 *   coordinate system's origin "in absolute (machine) coordinates" (NIST RS274NGC v3 §3.5.5),
 *   with no tool term in X or Y (§2.1.2.3: the length offset acts along Z only).
 *
 * Lengths are worked in whole quarter micro-units (a radius is half a diameter, a centre half a
 * sum, so every intermediate is a whole number) and rounded once, to the control's increment,
 * at the end.
 */
import { fromDecimal } from './decimal';
import { OffsetInputError } from './errors';
import { resolutionFor, roundToResolution, toMicro, type Units } from './units';

/** The two horizontal axes a work offset edge is found on. */
export type EdgeAxis = 'X' | 'Y';
export const EDGE_AXES = ['X', 'Y'] as const;

/**
 * Which side of the edge the probe was on when it touched: `minus` = it came from the minus
 * side (moving +), `plus` = it came from the plus side (moving −).
 */
export type ApproachSide = 'minus' | 'plus';
export const APPROACH_SIDES = ['minus', 'plus'] as const;

/** What the two edges of a centre belong to: a boss (outside) or a bore/pocket/slot (inside). */
export type FeatureSide = 'outside' | 'inside';

/** One edge touch: the machine coordinate shown and the side it was approached from. */
export interface EdgeTouch {
	machineCoordinate: number;
	approachedFrom: ApproachSide;
}

/** Plain words for the approach side, in the axis's own terms, for pages and messages. */
export function approachWords(axis: EdgeAxis, side: ApproachSide): string {
	return side === 'minus'
		? `from the ${axis}− side (moving ${axis}+)`
		: `from the ${axis}+ side (moving ${axis}−)`;
}

function finiteField(field: string, value: unknown): number {
	if (typeof value !== 'number' || !Number.isFinite(value)) {
		throw OffsetInputError.of(field, value, 'must be a finite number');
	}
	return value;
}

function probeRadiusQuarters(probeDiameter: number | undefined, units: Units): number {
	if (probeDiameter === undefined) {
		throw OffsetInputError.of(
			'probeDiameter',
			probeDiameter,
			`is needed: the edge is one probe radius from the reading (e.g. 0.2000 in or 6.000 mm for a common edge finder tip, in ${units === 'inch' ? 'in' : 'mm'})`
		);
	}
	finiteField('probeDiameter', probeDiameter);
	if (probeDiameter <= 0) {
		throw OffsetInputError.of('probeDiameter', probeDiameter, 'must be greater than zero');
	}
	const limit = units === 'inch' ? 2 : 50;
	if (probeDiameter > limit) {
		throw OffsetInputError.of(
			'probeDiameter',
			probeDiameter,
			`is larger than any edge finder or probe tip (over ${limit} ${units === 'inch' ? 'in' : 'mm'}); check the units`
		);
	}
	// The radius in quarter micro-units: diameter micro-units × 4 / 2.
	return toMicro(probeDiameter, 'probeDiameter') * 2;
}

function sideOf(field: string, value: unknown): ApproachSide {
	if (value !== 'minus' && value !== 'plus') {
		throw OffsetInputError.of(
			field,
			value,
			'must be "minus" or "plus" (the side the probe came from)'
		);
	}
	return value;
}

/** Edge position in quarter micro-units: the reading ± the probe radius. */
function edgeQuarters(touch: EdgeTouch, radiusQuarters: number, field: string): number {
	const m = toMicro(finiteField(`${field}.machineCoordinate`, touch.machineCoordinate)) * 4;
	const side = sideOf(`${field}.approachedFrom`, touch.approachedFrom);
	return side === 'minus' ? m + radiusQuarters : m - radiusQuarters;
}

/** Quarter micro-units (an integer) as the exact decimal q × 0.25 × 10⁻⁶. */
function fromQuarters(q: number): number {
	return fromDecimal({ mantissa: BigInt(q) * 25n, exponent: -8 });
}

function out(quarters: number, units: Units, resolution?: number): number {
	return roundToResolution(fromQuarters(quarters), resolutionFor(units, resolution));
}

/**
 * Position of an edge: the reading plus the probe radius when approached from the minus side,
 * minus it from the plus side (common shop practice).
 * @example edgePosition({ units: 'inch', touch: { machineCoordinate: -10.1, approachedFrom: 'minus' }, probeDiameter: 0.2 }) // -10
 * @throws OffsetInputError for a missing or implausible probe diameter or a bad side
 */
export function edgePosition(input: {
	units: Units;
	touch: EdgeTouch;
	probeDiameter: number | undefined;
	resolution?: number;
}): number {
	const r = probeRadiusQuarters(input.probeDiameter, input.units);
	return out(edgeQuarters(input.touch, r, 'touch'), input.units, input.resolution);
}

/** A centre found from two opposite edges, with the edges and the feature's size. */
export interface CentreResult {
	centre: number;
	/** The edge with the smaller coordinate, then the larger one. */
	lowEdge: number;
	highEdge: number;
	/** Distance between the two edges: the boss's or the bore's size along the axis. */
	width: number;
}

/**
 * Centre of a boss (outside) or a bore, pocket or slot (inside) from one edge on each side:
 * the mean of the two edge positions (common shop practice).
 *
 * The approach sides must fit the feature: on a boss the low edge is touched from the minus
 * side and the high edge from the plus side; inside a bore the probe sits between the walls,
 * so the low wall is touched from the plus side and the high wall from the minus side.
 * Anything else is refused with the reason (a centre from the wrong sides is off by a probe
 * diameter).
 * @throws OffsetInputError for a missing probe diameter, inconsistent sides, or edges that
 * leave no room for the feature
 */
export function centreFromEdges(input: {
	units: Units;
	axis: EdgeAxis;
	feature: FeatureSide;
	first: EdgeTouch;
	second: EdgeTouch;
	probeDiameter: number | undefined;
	resolution?: number;
}): CentreResult {
	const { axis, units } = input;
	if (input.feature !== 'outside' && input.feature !== 'inside') {
		throw OffsetInputError.of(
			'feature',
			input.feature,
			'must be "outside" (a boss) or "inside" (a bore, pocket or slot)'
		);
	}
	const r = probeRadiusQuarters(input.probeDiameter, units);
	const firstSide = sideOf('first.approachedFrom', input.first.approachedFrom);
	const secondSide = sideOf('second.approachedFrom', input.second.approachedFrom);
	if (firstSide === secondSide) {
		throw OffsetInputError.of(
			'second.approachedFrom',
			secondSide,
			`is the same side as the first edge (${approachWords(axis, firstSide)}); a centre needs one edge touched from each side`
		);
	}
	const m1 = finiteField('first.machineCoordinate', input.first.machineCoordinate);
	const m2 = finiteField('second.machineCoordinate', input.second.machineCoordinate);
	const [low, high, lowField] =
		m1 <= m2 ? [input.first, input.second, 'first'] : [input.second, input.first, 'second'];
	const expectedLowSide: ApproachSide = input.feature === 'outside' ? 'minus' : 'plus';
	if (low.approachedFrom !== expectedLowSide) {
		const what = input.feature === 'outside' ? 'a boss' : 'a bore or pocket';
		throw OffsetInputError.of(
			`${lowField}.approachedFrom`,
			low.approachedFrom,
			`does not fit ${what}: its low ${axis} edge is touched ${approachWords(axis, expectedLowSide)} and its high edge ${approachWords(axis, expectedLowSide === 'minus' ? 'plus' : 'minus')}; check the sides or the feature`
		);
	}
	const lowEdge = edgeQuarters(low, r, lowField);
	const highEdge = edgeQuarters(high, r, lowField === 'first' ? 'second' : 'first');
	if (highEdge <= lowEdge) {
		throw OffsetInputError.of(
			'second.machineCoordinate',
			input.second.machineCoordinate,
			`leaves no room for the feature: the two ${axis} edges come out ${fromQuarters(lowEdge - highEdge)} ${units === 'inch' ? 'in' : 'mm'} crossed; check the readings and the probe diameter`
		);
	}
	return {
		centre: out((lowEdge + highEdge) / 2, units, input.resolution),
		lowEdge: out(lowEdge, units, input.resolution),
		highEdge: out(highEdge, units, input.resolution),
		width: out(highEdge - lowEdge, units, input.resolution)
	};
}
