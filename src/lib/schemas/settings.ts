import { z } from 'zod';
import { isTimeZone } from '$lib/time';

/**
 * Shop settings (issue 18). The check limits are in the shop's default units; empty means "our
 * default" (src/lib/offsets/policy.ts), so a shop only records what it chose itself.
 */
const optionalNumber = (field: string, min: number, max: number, unit: string) =>
	z
		.number(`${field} must be a number (${unit}), or empty for the default.`)
		.min(min, `${field} must be from ${min} to ${max} ${unit}, or empty for the default.`)
		.max(max, `${field} must be from ${min} to ${max} ${unit}, or empty for the default.`)
		.nullable();

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
		checkHour: z.coerce
			.number('Pick an hour from 00 to 23.')
			.int('Pick a whole hour from 00 to 23.')
			.min(0, 'Pick an hour from 00 to 23.')
			.max(23, 'Pick an hour from 00 to 23.'),
		jumpTolerance: optionalNumber('Jump limit', 0.0001, 25, 'in or mm'),
		toolMaxAgeDays: optionalNumber('Tool length age limit', 1, 365, 'days'),
		workMaxAgeDays: optionalNumber('Work offset age limit', 1, 365, 'days')
	})
	.superRefine((v, ctx) => {
		if (v.jumpTolerance === null) return;
		const [lo, hi] = JUMP_RANGE[v.defaultUnits];
		if (v.jumpTolerance < lo || v.jumpTolerance > hi) {
			ctx.addIssue({
				code: 'custom',
				path: ['jumpTolerance'],
				message: `Jump limit ${v.jumpTolerance} is out of range: in ${v.defaultUnits} use ${lo} to ${hi}, or leave it empty for the default.`
			});
		}
	});

export type ShopSettingsInput = z.infer<typeof shopSettingsSchema>;
