import { z } from 'zod';
import { idField, numberField, optionalNumberField } from './number';

/** Acknowledge or resolve a finding: the comment says why (kept with the finding and audited). */
export const findingActionSchema = z.object({
	findingId: idField('Finding', 'Unknown finding.'),
	comment: z
		.string()
		.trim()
		.min(3, 'Say in a few words what you did or why it can wait.')
		.max(500, 'Keep it under 500 characters.')
});

/** The local hour of the shop's nightly check. */
export const checkHourSchema = z.object({
	hour: numberField('Hour', {
		whole: true,
		min: 0,
		max: 23,
		rangeMessage: 'Pick an hour from 00 to 23.'
	})
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
	machine: optionalNumberField('Machine', { whole: true, min: 1 }).catch(undefined),
	status: z.enum(FINDING_FILTER_STATUSES).catch('unresolved'),
	severity: z.enum(['any', 'stop', 'caution']).catch('any')
});
export type FindingFilter = z.infer<typeof findingFilterSchema>;
