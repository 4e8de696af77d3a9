import { z } from 'zod';
import { WEAR_LIMIT_RANGE } from '$lib/offsets/wear';
import { isTimeZone } from '$lib/time';
import { numberField, optionalNumberField } from './number';

/**
 * Shop settings (issue 18). The check limits are in the shop's default units; empty means "our
 * default" (src/lib/offsets/policy.ts), so a shop only records what it chose itself. Every
 * number reads through the one strict reader (./number.ts): "0,01" or "0.01in" is refused with
 * the field and why, never read as something else.
 */
const optionalNumber = (field: string, min: number, max: number, unit: string) =>
	optionalNumberField(field, {
		min,
		max,
		rangeMessage: `${field} must be from ${min} to ${max} ${unit}, or empty for the default.`
	});

/** Jump limits that make sense per unit: one tenth of the least increment up to a large slip. */
export const JUMP_RANGE = { inch: [0.0001, 1], mm: [0.001, 25] } as const;

export const shopSettingsSchema = z
	.object({
		name: z
			.string()
			.trim()
			.min(2, 'Enter the shop name (2 characters at least).')
			.max(120, 'Shop name too long (120 characters at most).'),
		timeZone: z
			.string()
			.trim()
			.refine(isTimeZone, 'Choose a time zone from the list (e.g. America/Chicago).'),
		defaultUnits: z.enum(['inch', 'mm'], 'Choose inch or mm.'),
		checkHour: numberField('Check hour', {
			whole: true,
			min: 0,
			max: 23,
			rangeMessage: 'Pick an hour from 00 to 23.'
		}),
		jumpTolerance: optionalNumber('Jump limit', 0.0001, 25, 'in or mm'),
		toolMaxAgeDays: optionalNumber('Tool length age limit', 1, 365, 'days'),
		workMaxAgeDays: optionalNumber('Work offset age limit', 1, 365, 'days'),
		/**
		 * The wear limit (issue 20), typed in `wearLimitUnits`: the units the page showed it in
		 * (the shop's saved units), so changing the shop's units in the same save never re-reads
		 * the number in the other unit. Kept in mm on the server.
		 */
		wearLimit: optionalNumberField('Wear limit', { min: 0, minExclusive: true }),
		wearLimitUnits: z.enum(['inch', 'mm'], 'The wear limit’s units must be inch or mm.')
	})
	.superRefine((v, ctx) => {
		if (v.jumpTolerance !== undefined) {
			const [lo, hi] = JUMP_RANGE[v.defaultUnits];
			if (v.jumpTolerance < lo || v.jumpTolerance > hi) {
				ctx.addIssue({
					code: 'custom',
					path: ['jumpTolerance'],
					message: `Jump limit ${v.jumpTolerance} is out of range: in ${v.defaultUnits} use ${lo} to ${hi}, or leave it empty for the default.`
				});
			}
		}
		if (v.wearLimit !== undefined) {
			const [lo, hi] = WEAR_LIMIT_RANGE[v.wearLimitUnits];
			const u = v.wearLimitUnits === 'inch' ? 'in' : 'mm';
			if (v.wearLimit < lo || v.wearLimit > hi) {
				ctx.addIssue({
					code: 'custom',
					path: ['wearLimit'],
					message: `Wear limit ${v.wearLimit} ${u} is out of range: use ${lo} to ${hi} ${u} (one least increment up to a tenth of an inch; more is a different tool, not wear), or leave it empty for the default.`
				});
			}
		}
	});

export type ShopSettingsInput = z.infer<typeof shopSettingsSchema>;
