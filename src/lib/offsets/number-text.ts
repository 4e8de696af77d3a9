/**
 * THE reader for every number a person types into Datumkeep (lengths, heights, increments,
 * T/H numbers, record ids, query parameters), on forms and in the JSON API alike. It either
 * returns the exact number the text spells or says why it refuses; it never truncates
 * ("25abc" is not 25) and never guesses.
 *
 * Decimal comma: REFUSED everywhere, with a message. A comma is a decimal point in much of
 * Europe and a thousands separator in the US and UK, so "1,000" is one or one thousand
 * depending on who typed it; a number that goes to a machine must not depend on that.
 * Accepted: optional sign (+, -, or the typographic minus U+2212), digits, at most one point
 * (".5" and "5." are fine). Refused: commas, spaces inside the number, units ("mm", "in", '"'),
 * exponents ("1e3"), hex, anything else.
 */
import { decimalPlaces, toDecimal } from './decimal';

export type NumberTextResult =
	| { ok: true; value: number; /** digits after the point as typed */ places: number }
	| { ok: false; empty: boolean; /** why, as a phrase after the field's label */ reason: string };

const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const UNIT =
	/^([+-]?(?:\d+(?:\.\d*)?|\.\d+))\s*(mm|millimet(?:er|re)s?|cm|in|inch|inches|"|''|thou)$/i;

/** What a refused text most likely was, in words the person can act on. */
function why(t: string, whole: boolean): string {
	if (t.includes(',')) {
		return /^[+-]?\d{1,3}(,\d{3})+(\.\d*)?$/.test(t)
			? 'has a comma: type it without thousands separators (1000, not 1,000)'
			: 'has a comma: use a point for decimals (20.5, not 20,5); a comma is refused because "1,000" could mean one or one thousand';
	}
	const unit = UNIT.exec(t);
	if (unit) return `has a unit ("${unit[2]}"): type the number alone (${unit[1]})`;
	if (/^[+-]?[\d.]+\s+[\d.]+$/.test(t)) return 'has a space inside it: type the digits together';
	if (/^[+-]?(\d+\.?\d*|\.\d+)e[+-]?\d+$/i.test(t))
		return 'is in exponent form: write it out in full';
	return whole
		? 'is not a whole number: use digits only'
		: 'is not a number: use digits with at most one point';
}

/**
 * Reads `raw` (text as typed, or a number from JSON) strictly.
 * @param whole whole numbers only (T/H numbers, ids): "2.0" is refused too.
 */
export function readNumberText(raw: unknown, opts: { whole?: boolean } = {}): NumberTextResult {
	let value: number;
	let places: number;
	if (typeof raw === 'number') {
		if (!Number.isFinite(raw)) return { ok: false, empty: false, reason: 'is not a finite number' };
		value = Object.is(raw, -0) ? 0 : raw;
		places = decimalPlaces(toDecimal(value));
	} else if (raw === undefined || raw === null || (typeof raw === 'string' && raw.trim() === '')) {
		return { ok: false, empty: true, reason: 'is required' };
	} else if (typeof raw !== 'string') {
		return { ok: false, empty: false, reason: 'is not a number' };
	} else {
		const t = raw.trim().replace(/\u2212/g, '-');
		if (!DECIMAL.test(t)) return { ok: false, empty: false, reason: why(t, opts.whole === true) };
		value = Number(t);
		if (!Number.isFinite(value)) return { ok: false, empty: false, reason: 'is too large' };
		if (Object.is(value, -0)) value = 0;
		places = (t.split('.')[1] ?? '').length;
	}
	if (opts.whole && (places > 0 || !Number.isSafeInteger(value)))
		return { ok: false, empty: false, reason: 'is not a whole number' };
	return { ok: true, value, places };
}

/**
 * The message shown beside a field: the field, what it must be, what was typed and why it was
 * refused, e.g. `Z travel must be a number; "20,5" has a comma: use a point for decimals…`.
 */
export function numberTextMessage(
	label: string,
	raw: unknown,
	reason: string,
	opts: { whole?: boolean; example?: string } = {}
): string {
	const shown =
		typeof raw === 'string'
			? `"${raw.trim()}"`
			: typeof raw === 'number'
				? String(raw)
				: `a ${raw === null ? 'null' : typeof raw}`;
	const kind = opts.whole ? 'a whole number' : 'a number';
	return `${label} must be ${kind}${opts.example ? `, such as ${opts.example}` : ''}; ${shown} ${reason}.`;
}
