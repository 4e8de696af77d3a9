import { z } from 'zod';
import { conventionSchema } from '$lib/offsets';

const optionalZ = (label: string) =>
	z
		.number({ message: `${label} must be a number.` })
		.refine(
			(v) => Number.isFinite(v) && v < 0,
			`${label} is a machine Z below home, so it must be negative.`
		)
		.optional();

/** Converting a machine's table to another convention, with the geometry the maths may need. */
export const conversionFormSchema = z.object({
	target: conventionSchema,
	referenceGaugeLineZ: optionalZ('Gauge-line Z on the reference'),
	masterTouchZ: optionalZ("The master tool's reading on the reference"),
	masterTool: z
		.number({ message: 'Master tool H must be a number.' })
		.int('Master tool H must be a whole number.')
		.min(1, 'Master tool H must be 1 or more.')
		.max(9999, 'Master tool H must be 9999 or less.')
		.optional()
});
