import { z } from 'zod';
import { decimalPlaces, toDecimal } from '$lib/offsets/decimal';
import { numberTextMessage, readNumberText } from '$lib/offsets/number-text';

/**
 * Number fields for every zod schema in the app. Each one reads its input (form text or a JSON
 * number) through the one strict reader, `readNumberText`, so "20,5", "25abc", "1,000" and
 * "25 mm" are refused with the field and why, and the stored number is exactly the one typed.
 *
 * Why `z.unknown().transform`: superforms turns a `z.number()` field's FormData text into a
 * number with `parseFloat` before zod sees it ("25abc" → 25, "20,5" → 20). A field whose
 * output JSON Schema type is unknown is handed over as the raw text, so the strict reader is
 * the first and only thing that reads it.
 */

/**
 * The transform inside every field made here. `.refine()` clones a schema but keeps this inner
 * part, so `isStrictNumberField` can prove no form holds a plain z.number() (schemas.test.ts).
 */
const STRICT_READERS = new WeakSet<object>();

/** True when `schema` (optional/default/refined or not) reads through `readNumberText`. */
export function isStrictNumberField(schema: z.ZodType): boolean {
	// eslint-disable-next-line @typescript-eslint/no-explicit-any
	let def: any = (schema as any)._zod.def;
	while (def.innerType) def = def.innerType._zod.def;
	return def.type === 'pipe' && STRICT_READERS.has(def.out);
}

export interface NumberFieldOptions {
	/** Whole numbers only (T/H numbers, hours, record ids). */
	whole?: boolean;
	min?: number;
	max?: number;
	/** True when the minimum itself is not allowed (lengths that must be above zero). */
	minExclusive?: boolean;
	/** Replaces the range message (say what the bound means). */
	rangeMessage?: string;
	/** Most digits after the point that are kept exactly (a length column holds 4). */
	maxPlaces?: number;
}

/** Lengths are stored as numeric(12, 4): more decimals would be rounded by the database. */
export const LENGTH_PLACES = 4;

function reader(label: string, opts: NumberFieldOptions, optional: boolean) {
	const field = z.unknown().transform((raw, ctx): number | undefined => {
		const r = readNumberText(raw, { whole: opts.whole });
		if (!r.ok) {
			if (r.empty && optional) return undefined;
			ctx.addIssue({
				code: 'custom',
				message: r.empty
					? `${label} is required.`
					: numberTextMessage(label, raw, r.reason, { whole: opts.whole })
			});
			return z.NEVER;
		}
		const v = r.value;
		// Trailing zeros are harmless (1.50000 is stored exactly as 1.5): count the value's places.
		const places = decimalPlaces(toDecimal(v));
		if (opts.maxPlaces !== undefined && places > opts.maxPlaces) {
			ctx.addIssue({
				code: 'custom',
				message: `${label} has ${places} decimals; it is kept to ${opts.maxPlaces}, so type at most ${opts.maxPlaces} (got ${v}).`
			});
			return z.NEVER;
		}
		const low = opts.min !== undefined && (opts.minExclusive ? v <= opts.min : v < opts.min);
		const high = opts.max !== undefined && v > opts.max;
		if (low || high) {
			const range =
				opts.min !== undefined && opts.max !== undefined
					? `from ${opts.min} to ${opts.max}`
					: opts.min !== undefined
						? opts.minExclusive
							? `greater than ${opts.min}`
							: `${opts.min} or more`
						: `${opts.max} or less`;
			ctx.addIssue({
				code: 'custom',
				message: opts.rangeMessage ?? `${label} must be ${range} (got ${v}).`
			});
			return z.NEVER;
		}
		return v;
	});
	STRICT_READERS.add(field._zod.def.out);
	return field;
}

/** A required number field. */
export function numberField(label: string, opts: NumberFieldOptions = {}) {
	return reader(label, opts, false) as unknown as z.ZodType<number, unknown>;
}

/** A number field that may be left blank (blank → undefined). */
export function optionalNumberField(label: string, opts: NumberFieldOptions = {}) {
	// .optional() makes the key optional in the inferred type; blank text is read as undefined.
	return (
		reader(label, opts, true) as unknown as z.ZodType<number | undefined, unknown>
	).optional();
}

/** A length in the machine's units (stored to 4 decimals; never rounded silently). */
export function lengthField(label: string, opts: NumberFieldOptions = {}) {
	return numberField(label, { maxPlaces: LENGTH_PLACES, ...opts });
}

/** A length that may be left blank. */
export function optionalLengthField(label: string, opts: NumberFieldOptions = {}) {
	return optionalNumberField(label, { maxPlaces: LENGTH_PLACES, ...opts });
}

/** A record id chosen from a list (tool, fixture, member…): a whole number above zero. */
export function idField(what: string, message = `${what} must be chosen from the list.`) {
	return numberField(what, { whole: true, min: 1, rangeMessage: message });
}
