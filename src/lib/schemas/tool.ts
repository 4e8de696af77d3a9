import { z } from 'zod';
import { idField, numberField, optionalLengthField } from './number';

// Number fields read form text, CSV cells and JSON numbers through the one strict reader.
const whole = (label: string, max: number) =>
	numberField(label, {
		whole: true,
		min: 1,
		max,
		rangeMessage: `${label} must be a whole number from 1 to ${max}.`
	});

const optionalLength = (label: string, positive: boolean) =>
	optionalLengthField(label, {
		min: 0,
		minExclusive: positive,
		rangeMessage: `${label} must be ${positive ? 'greater than zero' : 'zero or more'}.`
	});

/** A CSV cell for the schema: blank → undefined, otherwise the text as it is (the schema reads it). */
export function numberOrBlank(cell: string | undefined): string | undefined {
	const t = (cell ?? '').trim();
	return t === '' ? undefined : t;
}

/** A tool in a machine's rack: T number, H number (its tool length offset register), what it is. */
export const toolFormSchema = z.object({
	t: whole('T number', 9999),
	h: whole('H number', 9999),
	description: z
		.string()
		.trim()
		.min(1, 'Describe the tool (e.g. "1/2 in 3-flute end mill").')
		.max(120, 'Description too long (120 characters at most).'),
	holder: z.string().trim().max(120, 'Holder too long (120 characters at most).').default(''),
	stickout: optionalLength('Stickout', false),
	nominalLength: optionalLength('Nominal length', true)
});

export const toolIdSchema = z.object({ toolId: idField('Tool', 'Unknown tool.') });

/** A fixture: the work offset register it uses and what it is. */
export const fixtureFormSchema = z.object({
	register: z
		.string()
		.trim()
		.transform((s) => s.toUpperCase().replace(/\s+/g, ' '))
		.refine(
			(s) => /^G5[4-9]$/.test(s) || /^G54\.1 P([1-9]|[1-3][0-9]|4[0-8])$/.test(s),
			'Register must be a work offset G54–G59 or G54.1 P1–P48.'
		),
	name: z
		.string()
		.trim()
		.min(1, 'Name the fixture (e.g. "Op A — 6 in vise").')
		.max(120, 'Name too long (120 characters at most).'),
	description: z
		.string()
		.trim()
		.max(500, 'Description too long (500 characters at most).')
		.default('')
});

export const fixtureIdSchema = z.object({
	fixtureId: idField('Fixture', 'Unknown fixture.')
});
