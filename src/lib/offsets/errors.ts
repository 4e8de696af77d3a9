/**
 * One way to fail for the whole engine: every entry point that cannot answer throws an
 * `OffsetInputError` listing each problem as field, value and why. Callers (forms, the API)
 * show `issues` next to the fields; nothing else is thrown on bad input.
 */

/** One reason an input was refused. `field` is a dotted path such as `table.work.G54`. */
export interface OffsetIssue {
	field: string;
	value: unknown;
	message: string;
}

/** Thrown by every engine entry point when its input cannot be used. */
export class OffsetInputError extends Error {
	readonly issues: OffsetIssue[];

	constructor(issues: OffsetIssue[]) {
		super(issues.map((i) => `${i.field}: ${i.message} (got ${describeValue(i.value)})`).join('; '));
		this.name = 'OffsetInputError';
		this.issues = issues;
	}

	/** A single-issue error, the common case. */
	static of(field: string, value: unknown, message: string): OffsetInputError {
		return new OffsetInputError([{ field, value, message }]);
	}
}

/** True for an `OffsetInputError`, also across module copies (checks the name, not the class). */
export function isOffsetInputError(e: unknown): e is OffsetInputError {
	return (
		e instanceof Error &&
		e.name === 'OffsetInputError' &&
		Array.isArray((e as OffsetInputError).issues)
	);
}

/** Short, safe rendering of any value for a message: NaN and infinities stay readable. */
export function describeValue(value: unknown): string {
	if (typeof value === 'number') return Number.isNaN(value) ? 'NaN' : String(value);
	if (value === undefined) return 'nothing';
	if (typeof value === 'string') return JSON.stringify(value);
	try {
		const text = JSON.stringify(value);
		return text.length > 60 ? `${text.slice(0, 57)}...` : text;
	} catch {
		return String(value);
	}
}
