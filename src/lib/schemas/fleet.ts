import { z } from 'zod';

/** Acknowledge or resolve a finding: the comment says why (kept with the finding and audited). */
export const findingActionSchema = z.object({
	findingId: z.coerce.number().int().positive(),
	comment: z
		.string()
		.trim()
		.min(3, 'Say in a few words what you did or why it can wait.')
		.max(500, 'Keep it under 500 characters.')
});

/** The local hour of the shop's nightly check. */
export const checkHourSchema = z.object({
	hour: z.coerce
		.number()
		.int('Pick a whole hour.')
		.min(0, 'Pick an hour from 00 to 23.')
		.max(23, 'Pick an hour from 00 to 23.')
});

/** "Check now": the form says what to check (the whole shop), so an empty post is refused. */
export const checkNowSchema = z.object({ scope: z.literal('shop') });

/** The member's own digest choice. */
export const digestPreferenceSchema = z.object({
	receive: z.enum(['yes', 'no'])
});

export const FINDING_FILTER_STATUSES = [
	'unresolved',
	'open',
	'acknowledged',
	'resolved',
	'all'
] as const;
export const findingFilterSchema = z.object({
	machine: z.coerce.number().int().positive().optional().catch(undefined),
	status: z.enum(FINDING_FILTER_STATUSES).catch('unresolved'),
	severity: z.enum(['any', 'stop', 'caution']).catch('any')
});
export type FindingFilter = z.infer<typeof findingFilterSchema>;
