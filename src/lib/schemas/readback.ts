import { z } from 'zod';
import { MAX_CONTROL_FILE_CHARS } from '$lib/offsets';

/**
 * A read-back at the control, as the page and the API send it: either the control's saved
 * offset file, or the values the operator typed from the control's screen. Typed values stay
 * text here; the server reads them with the machine's units and increment in hand (the same
 * strict length parser as the reading forms), so each message names the register.
 */
const typedValue = z.union([z.string().trim().max(40, 'is too long to be a length'), z.number()]);
const typedRecord = z
	.record(z.string().max(20), typedValue)
	.refine((r) => Object.keys(r).length <= 400, 'has more than 400 registers');

const common = {
	/** The setup whose registers were read back, when started from a setup page. */
	setupId: z.coerce.number().int().positive().optional(),
	note: z.string().trim().max(500, 'Note too long (500 characters at most).').default('')
};

export const readbackFileSchema = z.object({
	source: z.literal('file'),
	fileName: z.string().trim().max(200).default(''),
	text: z
		.string()
		.min(1, 'The file is empty.')
		.max(MAX_CONTROL_FILE_CHARS, 'The file is too large to be an offset file.'),
	...common
});

export const readbackTypedSchema = z.object({
	source: z.literal('typed'),
	values: z.object({
		work: typedRecord.default({}),
		tools: typedRecord.default({}),
		wear: typedRecord.default({})
	}),
	...common
});

export const readbackSchema = z.discriminatedUnion('source', [
	readbackFileSchema,
	readbackTypedSchema
]);

export type ReadbackRequest = z.infer<typeof readbackSchema>;
