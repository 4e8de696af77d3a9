/**
 * Fixed-decimal text for offsets: every value shows the same number of decimals as the
 * control's increment (4 in inch, 3 in mm by default), so columns line up and a dropped
 * trailing zero is never mistaken for a different value.
 */
import { decimalPlaces, formatDecimal, toDecimal } from './decimal';
import { OffsetInputError } from './errors';
import { resolutionFor, roundToResolution, UNIT_LABEL, type Units } from './units';

/** Digits after the point for a resolution: 0.0001 → 4, 0.001 → 3, 0.0005 → 4. */
export function decimalsFor(resolution: number): number {
	if (!Number.isFinite(resolution) || resolution <= 0) {
		throw OffsetInputError.of('resolution', resolution, 'must be a positive finite number');
	}
	return decimalPlaces(toDecimal(resolution));
}

/**
 * A length rounded (half away from zero) and written with fixed decimals, no unit:
 * `formatLength(-12.3, 'inch')` → "-12.3000". Negative zero prints as "0.0000".
 */
export function formatLength(value: number, units: Units, resolution?: number): string {
	if (!Number.isFinite(value)) {
		throw OffsetInputError.of(
			'value',
			value,
			Number.isNaN(value) ? 'is not a number (NaN)' : 'must be a finite number'
		);
	}
	const step = resolutionFor(units, resolution);
	const places = decimalsFor(step);
	const text = formatDecimal(toDecimal(roundToResolution(value, step)), places);
	return /^-0(\.0*)?$/.test(text) ? text.slice(1) : text;
}

/** The same with its unit beside it, as every screen shows it: "-12.3000 in". */
export function formatWithUnits(value: number, units: Units, resolution?: number): string {
	return `${formatLength(value, units, resolution)} ${UNIT_LABEL[units]}`;
}
