/**
 * Turns zod's issues into `OffsetInputError` issues: a dotted field, the offending value and a
 * sentence a machinist can act on (NaN and infinities get their own words).
 */
import type { z } from 'zod';
import { OffsetInputError, type OffsetIssue } from './errors';

function valueAt(input: unknown, path: readonly PropertyKey[]): unknown {
	let v: unknown = input;
	for (const key of path) {
		if (v === null || typeof v !== 'object') return undefined;
		v = (v as Record<PropertyKey, unknown>)[key];
	}
	return v;
}

function friendly(issue: z.core.$ZodIssue, value: unknown): string {
	if (issue.code === 'invalid_type') {
		if (typeof value === 'number' && Number.isNaN(value)) return 'is not a number (NaN)';
		if (value === Infinity || value === -Infinity) return 'is infinite; it must be a finite number';
		if (value === undefined) return `is required (${issue.expected})`;
		return `must be ${issue.expected === 'number' ? 'a number' : issue.expected}`;
	}
	if (issue.code === 'invalid_union') {
		if (value === undefined) return 'is required';
		// Say why the most likely alternative failed: a specific rule beats "wrong type".
		const inner = issue.errors.flat();
		const specific = inner.find((i) => i.code !== 'invalid_type' && i.code !== 'invalid_union');
		return specific ? specific.message : inner[0] ? friendly(inner[0], value) : issue.message;
	}
	if (issue.code === 'invalid_value' && 'values' in issue) {
		return `must be one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}`;
	}
	return issue.message;
}

/** zod issues as OffsetIssues, fields prefixed with `root` (e.g. "table.work.G54"). */
export function toIssues(error: z.ZodError, input: unknown, root: string): OffsetIssue[] {
	return error.issues.map((issue) => {
		const path = issue.path;
		const value =
			'input' in issue && issue.input !== undefined ? issue.input : valueAt(input, path);
		const field = [root, ...path.map(String)].filter((p) => p !== '').join('.');
		return { field: field || root, value, message: friendly(issue, value) };
	});
}

/** Parses `input` with `schema` or throws OffsetInputError naming every bad field. */
export function parseInput<S extends z.ZodType>(
	schema: S,
	input: unknown,
	root: string
): z.output<S> {
	const result = schema.safeParse(input);
	if (!result.success) throw new OffsetInputError(toIssues(result.error, input, root));
	return result.data;
}

/** Throws OffsetInputError unless `value` is a finite number. */
export function requireFinite(value: unknown, field: string): number {
	if (typeof value !== 'number') throw OffsetInputError.of(field, value, 'must be a number');
	if (Number.isNaN(value)) throw OffsetInputError.of(field, value, 'is not a number (NaN)');
	if (!Number.isFinite(value))
		throw OffsetInputError.of(field, value, 'is infinite; it must be a finite number');
	return value;
}
