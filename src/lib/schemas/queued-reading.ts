import { z } from 'zod';
import { partTopReadingSchema, toolReadingSchema } from './readings';

/**
 * A reading kept on the device while the connection was down, as it is sent when the
 * connection returns (POST /api/v1/shops/[shop]/machines/[machine]/readings). The device
 * stores exactly this (plus what it shows in its list); the server computes and checks it as
 * the reading forms do, with the measured time beside the time it was received.
 */
const common = {
	/** Made on the device when the reading was queued: the same key is never recorded twice. */
	clientKey: z.uuid({ message: 'clientKey must be a UUID made when the reading was queued.' }),
	/** When the operator saved it on the device (device clock, ISO 8601 with offset). */
	measuredAt: z.iso.datetime({
		offset: true,
		message: 'measuredAt must be a date and time such as 2026-12-17T09:30:00Z.'
	})
};

// No override on a device: a value the checks call Stop waits for the operator at the form.
const notQueued = { correctsReadingId: true, override: true, overrideReason: true } as const;
const toolFields = toolReadingSchema.omit(notQueued);
const partTopFields = partTopReadingSchema.omit(notQueued);

export const queuedReadingSchema = z.discriminatedUnion('kind', [
	z.object({
		...common,
		kind: z.literal('tool'),
		toolId: z.string().regex(/^\d{1,18}$/, 'toolId must be a record number'),
		form: toolFields
	}),
	z.object({
		...common,
		kind: z.literal('part-top'),
		fixtureId: z.string().regex(/^\d{1,18}$/, 'fixtureId must be a record number'),
		form: partTopFields
	})
]);

export type QueuedReading = z.infer<typeof queuedReadingSchema>;
export type QueuedToolForm = z.infer<typeof toolFields>;
export type QueuedPartTopForm = z.infer<typeof partTopFields>;

/** A reason a queued reading was not recorded and waits for the operator (severity Stop). */
export interface QueueStop {
	kind: string;
	message: string;
}

/** The server's answer to a queued reading. */
export type QueuedReadingAnswer =
	| {
			outcome: 'saved' | 'duplicate';
			readingId: number;
			label: string;
			value: number;
			/** The value with its units at the machine's increment, e.g. "-14.7504 in". */
			valueText: string;
			historyUrl: string;
	  }
	| {
			outcome: 'needs-decision';
			label: string;
			value: number | null;
			reasons: QueueStop[];
			formUrl: string;
	  }
	| { outcome: 'refused'; issues: { field: string; message: string }[]; formUrl: string };
