/**
 * Findings: what the engine (and, later, the program check) found wrong, in a shape the
 * database, the fleet board and the digest all store as is. DESIGN.md §3.
 */
import { z } from 'zod';

/** Kinds that checkOffsets reports (tables and histories). */
export const TABLE_FINDING_KINDS = [
	'sign',
	'out-of-travel',
	'unit-slip',
	'decimal-slip',
	'sign-flip',
	'transposed-digits',
	'jump',
	'stale-age',
	'stale-reference',
	'duplicate-register',
	'unset'
] as const;

/** Kinds that the program check reports. */
export const PROGRAM_FINDING_KINDS = [
	'low-traverse',
	'no-length-comp',
	'units-mismatch',
	'unknown-work-offset',
	'unknown-tool-offset',
	'overtravel',
	'parse-error',
	'rapid-into-part',
	'heights-unknown'
] as const;

/** Kinds from read-backs at the control (issue 16), made by the shop check and the read-back itself. */
export const READBACK_FINDING_KINDS = ['readback-mismatch', 'unverified'] as const;

/** Every finding kind. */
export const FINDING_KINDS = [
	...TABLE_FINDING_KINDS,
	...PROGRAM_FINDING_KINDS,
	...READBACK_FINDING_KINDS
] as const;

export type TableFindingKind = (typeof TABLE_FINDING_KINDS)[number];
export type ProgramFindingKind = (typeof PROGRAM_FINDING_KINDS)[number];
export type ReadbackFindingKind = (typeof READBACK_FINDING_KINDS)[number];
export type FindingKind = (typeof FINDING_KINDS)[number];

/** `stop`: do not run until fixed. `caution`: look before running. */
export type Severity = 'caution' | 'stop';

/** open → acknowledged → resolved. */
export type FindingStatus = 'open' | 'acknowledged' | 'resolved';

/** What a finding is about. Ids are the caller's (database) ids when known. */
export type FindingSubject =
	| { type: 'machine'; id?: string }
	| { type: 'fixture'; register: string; id?: string }
	| { type: 'tool'; h: string; id?: string }
	| { type: 'setup'; id?: string; register?: string; h?: string }
	| { type: 'program-line'; line: number; programId?: string };

/** One finding. `key` is stable for the same problem on the same subject (idempotent upserts). */
export interface Finding {
	key: string;
	kind: FindingKind;
	severity: Severity;
	subject: FindingSubject;
	/** One or two plain sentences: what is wrong, then what to do. */
	message: string;
	/** Absent from fresh engine output (the caller's store owns the status). */
	status?: FindingStatus;
	/** Numbers behind the message, for screens (values in the table's units). */
	data?: Record<string, number | string | boolean>;
}

/** Stable text for a subject: "tool:H3", "fixture:G54.1 P2", "setup:s1:G55:H4", "line:12". */
export function subjectKey(subject: FindingSubject): string {
	switch (subject.type) {
		case 'machine':
			return `machine:${subject.id ?? '-'}`;
		case 'fixture':
			return `fixture:${subject.register}`;
		case 'tool':
			return `tool:H${subject.h}`;
		case 'setup':
			return [
				'setup',
				subject.id ?? '-',
				subject.register ?? '-',
				subject.h ? `H${subject.h}` : '-'
			].join(':');
		case 'program-line':
			return `${subject.programId ? `program:${subject.programId}:` : ''}line:${subject.line}`;
	}
}

/** The key of a finding: kind + subject (e.g. "jump|tool:H3"). */
export function findingKey(kind: FindingKind, subject: FindingSubject): string {
	return `${kind}|${subjectKey(subject)}`;
}

/** Builds a finding with its key. */
export function makeFinding(
	kind: FindingKind,
	severity: Severity,
	subject: FindingSubject,
	message: string,
	data?: Finding['data']
): Finding {
	const f: Finding = { key: findingKey(kind, subject), kind, severity, subject, message };
	if (data) f.data = data;
	return f;
}

/** Stop findings first, then in the order found (sort is stable). */
export function sortFindings(findings: Finding[]): Finding[] {
	return [...findings].sort((a, b) =>
		a.severity === b.severity ? 0 : a.severity === 'stop' ? -1 : 1
	);
}

/** zod schema of a Finding, for the API and stored rows. */
export const findingSchema = z.object({
	key: z.string(),
	kind: z.enum(FINDING_KINDS),
	severity: z.enum(['caution', 'stop']),
	subject: z.discriminatedUnion('type', [
		z.object({ type: z.literal('machine'), id: z.string().optional() }),
		z.object({ type: z.literal('fixture'), register: z.string(), id: z.string().optional() }),
		z.object({ type: z.literal('tool'), h: z.string(), id: z.string().optional() }),
		z.object({
			type: z.literal('setup'),
			id: z.string().optional(),
			register: z.string().optional(),
			h: z.string().optional()
		}),
		z.object({
			type: z.literal('program-line'),
			line: z.number().int(),
			programId: z.string().optional()
		})
	]),
	message: z.string(),
	status: z.enum(['open', 'acknowledged', 'resolved']).optional(),
	data: z.record(z.string(), z.union([z.number(), z.string(), z.boolean()])).optional()
});
