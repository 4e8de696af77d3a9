/**
 * Inch and millimetre, the control's least increment, and exact conversion between them.
 * 1 in = 25.4 mm exactly (NIST SP 811, App. B.8). Rounding is half away from zero
 * (see decimal.ts).
 */
import { countSteps, divRound, fromDecimal, pow10, toDecimal, type Decimal } from './decimal';
import { OffsetInputError } from './errors';

/** Length units a machine, table or reading is kept in. */
export type Units = 'inch' | 'mm';

/** All units, for schemas and pickers. */
export const UNITS = ['inch', 'mm'] as const;

/** Millimetres per inch, exact by definition (NIST SP 811). */
export const MM_PER_INCH = 25.4;

/**
 * The usual least input increment: 0.0001 in and 0.001 mm (M. Lynch, Modern Machine Shop).
 * A machine may state its own `resolution`.
 */
export const DEFAULT_RESOLUTION: Readonly<Record<Units, number>> = { inch: 0.0001, mm: 0.001 };

/** Short unit labels shown beside every value. */
export const UNIT_LABEL: Readonly<Record<Units, string>> = { inch: 'in', mm: 'mm' };

/**
 * Internal lengths are integers of one micro-unit (10⁻⁶ in or 10⁻⁶ mm): 25–100× finer than
 * any control's increment, so sums and differences of offsets are exact integer maths.
 */
export const MICRO = 1_000_000;

function finite(value: number, field: string): void {
	if (typeof value !== 'number' || !Number.isFinite(value)) {
		throw OffsetInputError.of(
			field,
			value,
			Number.isNaN(value) ? 'is not a number (NaN)' : 'must be a finite number'
		);
	}
}

function resolutionOf(resolution: number | Units, field = 'resolution'): Decimal {
	const r = typeof resolution === 'string' ? DEFAULT_RESOLUTION[resolution] : resolution;
	if (r === undefined)
		throw OffsetInputError.of(field, resolution, 'must be "inch", "mm" or a positive number');
	finite(r, field);
	if (r <= 0) throw OffsetInputError.of(field, r, 'must be greater than zero');
	return toDecimal(r);
}

/** A length as an integer number of micro-units (rounded half away from zero past 6 decimals). */
export function toMicro(value: number, field = 'value'): number {
	finite(value, field);
	return Number(countSteps(toDecimal(value), { mantissa: 1n, exponent: -6 }));
}

/** Back from micro-units to a plain number whose printed form is the exact decimal. */
export function fromMicro(micro: number): number {
	return fromDecimal({ mantissa: BigInt(micro), exponent: -6 });
}

/**
 * Whole number of increments of `resolution` nearest to `value` (half away from zero).
 * `resolution` is a positive number or a unit for its default increment.
 */
export function toIncrements(value: number, resolution: number | Units): number {
	finite(value, 'value');
	return Number(countSteps(toDecimal(value), resolutionOf(resolution)));
}

/** `count` increments of `resolution` as a number that prints exactly (12345 × 0.0001 → 1.2345). */
export function fromIncrements(count: number, resolution: number | Units): number {
	if (!Number.isSafeInteger(count))
		throw OffsetInputError.of('count', count, 'must be a whole number');
	const r = resolutionOf(resolution);
	return fromDecimal({ mantissa: BigInt(count) * r.mantissa, exponent: r.exponent });
}

/**
 * Rounds to the control's least increment, half away from zero.
 * @param resolution a positive step such as 0.0001, or 'inch' / 'mm' for the usual increment
 * @example roundToResolution(1.23455, 0.0001) // 1.2346
 */
export function roundToResolution(value: number, resolution: number | Units): number {
	return fromIncrements(toIncrements(value, resolution), resolution);
}

/**
 * Converts a length between inch and mm exactly (1 in = 25.4 mm). Inch → mm is always an
 * exact decimal; mm → inch usually is not, so pass `resolution` (a step or 'control' for the
 * target unit's usual increment) to get a value a control can hold.
 * @example toUnits(1, 'inch', 'mm') // 25.4
 * @example toUnits(10, 'mm', 'inch', 'control') // 0.3937
 */
export function toUnits(
	value: number,
	from: Units,
	to: Units,
	resolution?: number | 'control'
): number {
	finite(value, 'value');
	for (const [field, u] of [
		['from', from],
		['to', to]
	] as const) {
		if (u !== 'inch' && u !== 'mm') throw OffsetInputError.of(field, u, 'must be "inch" or "mm"');
	}
	const d = toDecimal(value);
	// value as the exact fraction num / den × 10^exponent
	let num = d.mantissa;
	let den = 1n;
	if (from === 'inch' && to === 'mm') num *= 254n;
	if (from === 'mm' && to === 'inch') den = 254n;
	const exponent = from === to ? d.exponent : from === 'inch' ? d.exponent - 1 : d.exponent + 1;
	if (resolution === undefined) {
		if (den === 1n) return fromDecimal({ mantissa: num, exponent });
		// 20 significant digits is more than a double holds: the result is the nearest double.
		const extra = 20;
		return fromDecimal({ mantissa: divRound(num * pow10(extra), den), exponent: exponent - extra });
	}
	const step = resolutionOf(resolution === 'control' ? to : resolution);
	// count = (num/den × 10^exponent) / (step.mantissa × 10^step.exponent), rounded half away
	const e = Math.min(exponent, step.exponent);
	const count = divRound(num * pow10(exponent - e), den * step.mantissa * pow10(step.exponent - e));
	return fromDecimal({ mantissa: count * step.mantissa, exponent: step.exponent });
}

/** The increment a machine works to: its own `resolution`, else the usual one for its units. */
export function resolutionFor(units: Units, resolution?: number): number {
	return resolution ?? DEFAULT_RESOLUTION[units];
}
