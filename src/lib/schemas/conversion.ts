import { z } from 'zod';
import { conventionSchema } from '$lib/offsets';

const optionalZ = (label: string) =>
	z
		.union([z.literal(''), z.coerce.number({ message: `${label} must be a number.` })])
		.default('')
		.refine(
			(v) => v === '' || (Number.isFinite(v) && v < 0),
			`${label} is a machine Z below home, so it must be negative.`
		);

/** Converting a machine's table to another convention, with the geometry the maths may need. */
export const conversionFormSchema = z.object({
	target: conventionSchema,
	referenceGaugeLineZ: optionalZ('Gauge-line Z on the reference'),
	masterTouchZ: optionalZ("The master tool's reading on the reference"),
	masterTool: z
		.union([
			z.literal(''),
			z.coerce
				.number()
				.int()
				.min(1, 'Master tool H must be 1 or more.')
				.max(9999, 'Master tool H must be 9999 or less.')
		])
		.default('')
});
