/**
 * Exact decimal arithmetic on the numbers people type. A JS number such as 1.2345 is read as
 * the decimal it prints as (its shortest round-trip form, "1.2345"), never as the binary
 * fraction behind it, so 0.1 + 0.2 can never show up as 0.30000000000000004.
 *
 * Halves rule, used everywhere in the engine: **round half away from zero**
 * (1.23455 → 1.2346, −1.23455 → −1.2346). It is symmetric in sign, so a table converted and
 * its negated twin stay negations of each other.
 */

/** value = mantissa × 10^exponent, exactly. */
export interface Decimal {
	mantissa: bigint;
	exponent: number;
}

/** Reads a finite number as the exact decimal of its shortest printed form. */
export function toDecimal(value: number): Decimal {
	if (!Number.isFinite(value)) throw new RangeError(`not a finite number: ${value}`);
	const text = String(value);
	const match = /^(-?)(\d+)(?:\.(\d+))?(?:e([+-]?\d+))?$/.exec(text);
	if (!match) throw new RangeError(`cannot read ${text} as a decimal`);
	const [, sign, whole, fraction = '', exp = '0'] = match;
	const digits = BigInt(whole + fraction);
	return {
		mantissa: sign === '-' ? -digits : digits,
		exponent: Number(exp) - fraction.length
	};
}

/** The number nearest to an exact decimal (parsing a decimal string is correctly rounded). */
export function fromDecimal(d: Decimal): number {
	const n = Number(`${d.mantissa}e${d.exponent}`);
	return Object.is(n, -0) ? 0 : n;
}

/** Integer division num/den rounded half away from zero (den > 0 or < 0). */
export function divRound(num: bigint, den: bigint): bigint {
	if (den === 0n) throw new RangeError('division by zero');
	if (den < 0n) return divRound(-num, -den);
	const negative = num < 0n;
	const a = negative ? -num : num;
	const q = (2n * a + den) / (2n * den);
	return negative ? -q : q;
}

/** 10^n as a bigint. */
export function pow10(n: number): bigint {
	return 10n ** BigInt(n);
}

/** Brings two decimals to the same exponent so their mantissas can be compared or added. */
export function align(a: Decimal, b: Decimal): [bigint, bigint, number] {
	const e = Math.min(a.exponent, b.exponent);
	return [a.mantissa * pow10(a.exponent - e), b.mantissa * pow10(b.exponent - e), e];
}

/**
 * Rounds the exact rational num/den (scaled by 10^exponent) to a whole number of `step`
 * (a positive decimal), half away from zero, and returns the count of steps.
 */
export function countSteps(value: Decimal, step: Decimal): bigint {
	const [a, b] = align(value, step);
	return divRound(a, b);
}

/** Number of digits after the decimal point needed to write `d` exactly (never negative). */
export function decimalPlaces(d: Decimal): number {
	if (d.mantissa === 0n) return 0;
	let m = d.mantissa < 0n ? -d.mantissa : d.mantissa;
	let e = d.exponent;
	while (e < 0 && m % 10n === 0n) {
		m /= 10n;
		e += 1;
	}
	return Math.max(0, -e);
}

/** Writes an exact decimal with exactly `places` digits after the point (rounding half away). */
export function formatDecimal(d: Decimal, places: number): string {
	const scaled = countSteps(d, { mantissa: 1n, exponent: -places });
	const negative = scaled < 0n;
	const digits = (negative ? -scaled : scaled).toString().padStart(places + 1, '0');
	const whole = digits.slice(0, digits.length - places);
	const fraction = digits.slice(digits.length - places);
	const body = places > 0 ? `${whole}.${fraction}` : whole;
	return negative ? `-${body}` : body;
}
