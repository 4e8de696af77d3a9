import { z } from 'zod';

/**
 * Reading forms (touch off a tool, touch off a part top, re-establish the reference). Numbers
 * arrive as the operator typed them and stay text here: the server turns them into lengths
 * with the machine's units and increment in hand (src/lib/server/readings/input.ts), so every
 * message can name the field, the machine and the rule.
 */

/** How the tip met the surface. `directly` means no block: the height must be 0. */
export const TOUCH_THROUGH = [
	'directly',
	'gauge block',
	'1-2-3 block',
	'tool setter',
	'feeler or shim',
	'other'
] as const;
export type TouchThrough = (typeof TOUCH_THROUGH)[number];

export const TOUCH_THROUGH_LABEL: Record<TouchThrough, string> = {
	directly: 'Directly (tip on the surface)',
	'gauge block': 'Gauge block',
	'1-2-3 block': '1-2-3 block',
	'tool setter': 'Tool setter',
	'feeler or shim': 'Feeler or shim',
	other: 'Something else'
};

/** Reference surfaces the database accepts (reference_surfaces_instrument_check). */
export const REFERENCE_INSTRUMENTS = [
	'1-2-3 block',
	'gauge block',
	'tool setter',
	'other'
] as const;

const text = (max: number, label: string) =>
	z.string().trim().max(max, `${label} is too long (${max} characters at most).`).default('');

const idText = z
	.string()
	.trim()
	.regex(/^\d*$/, 'must be a record number')
	.max(18, 'must be a record number')
	.default('');

const shared = {
	/** Raw machine-coordinate Z off the control, as typed. */
	machineZ: z.string().trim().max(40, 'Machine Z is too long to be a reading.').default(''),
	touchedThrough: z
		.enum(TOUCH_THROUGH, { message: `Choose one of: ${TOUCH_THROUGH.join(', ')}.` })
		.default('directly'),
	/** Height of the block or setter between the tip and the surface, as typed. */
	blockHeight: z.string().trim().max(40, 'Block height is too long to be a length.').default(''),
	reason: text(500, 'Reason'),
	/** When this reading corrects a wrong one: that reading's id. */
	correctsReadingId: idText,
	/** "Save anyway": the operator saw the Stop findings and saves over them (with a reason). */
	override: z.boolean().default(false),
	overrideReason: text(500, 'Override reason')
};

/** Fields of the override dialog: not part of what was worked out (see previewKey). */
const OVERRIDE_FIELDS = new Set(['override', 'overrideReason']);

/**
 * What a machine Z placeholder shows: the format, never a value (a real-looking number in an
 * empty field can be taken for a reading). x marks a digit.
 */
export const MACHINE_Z_FORMAT = { inch: 'e.g. -1x.xxxx', mm: 'e.g. -2xx.xxx' } as const;

/** Touch off a tool on the reference, or re-measure it after a break or change. */
export const toolReadingSchema = z.object({
	...shared,
	/** A new or re-ground tool, a new insert, a new holder: the length changed on purpose. */
	toolChanged: z.boolean().default(false)
});

/** Touch off a fixture's part top with a tool whose length offset is already recorded. */
export const partTopReadingSchema = z.object({
	...shared,
	withToolId: idText,
	/** A new part in the vise, or the fixture was taken off and put back. */
	fixtureChanged: z.boolean().default(false)
});

/** Re-establish the machine's reference: a new version of the surface, why, and an optional check touch. */
export const referenceReadingSchema = z.object({
	instrument: z
		.enum(REFERENCE_INSTRUMENTS, {
			message: `Choose one of: ${REFERENCE_INSTRUMENTS.join(', ')}.`
		})
		.default('1-2-3 block'),
	height: z.string().trim().max(40, 'Height is too long to be a length.').default(''),
	location: text(200, 'Location'),
	gaugeLineZ: z.string().trim().max(40, 'Gauge-line Z is too long to be a length.').default(''),
	note: text(500, 'Why'),
	checkToolId: idText,
	machineZ: z.string().trim().max(40, 'Machine Z is too long to be a reading.').default(''),
	blockHeight: z.string().trim().max(40, 'Block height is too long to be a length.').default('')
});

export type ToolReadingForm = z.infer<typeof toolReadingSchema>;
export type PartTopReadingForm = z.infer<typeof partTopReadingSchema>;
export type ReferenceReadingForm = z.infer<typeof referenceReadingSchema>;

/**
 * The inputs a preview was computed from, as one string. The page offers Save only while the
 * form still holds exactly what was previewed, so nothing is saved that was not seen first.
 */
export function previewKey(form: Record<string, unknown>): string {
	const keys = Object.keys(form)
		.filter((k) => !OVERRIDE_FIELDS.has(k))
		.sort();
	return JSON.stringify(
		keys.map((k) => [k, typeof form[k] === 'string' ? String(form[k]).trim() : form[k]])
	);
}
