import { z } from 'zod';
import { conventionSchema } from '$lib/offsets';
import { optionalLengthField, optionalNumberField } from './number';

const optionalZ = (label: string) =>
	optionalLengthField(label).refine(
		(v) => v === undefined || v < 0,
		`${label} is a machine Z below home, so it must be negative.`
	);

/** Converting a machine's table to another convention, with the geometry the maths may need. */
export const conversionFormSchema = z.object({
	target: conventionSchema,
	referenceGaugeLineZ: optionalZ('Gauge-line Z on the reference'),
	masterTouchZ: optionalZ("The master tool's reading on the reference"),
	masterTool: optionalNumberField('Master tool H', { whole: true, min: 1, max: 9999 })
});
