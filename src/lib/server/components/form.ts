import { fail } from '@sveltejs/kit';
import type { z } from 'zod';
import { ReadingInputError, type ReadingIssue } from '../readings/input';

/**
 * Reads a posted form through its zod schema (the schema is the one check, shared with the
 * API): checkboxes arrive as "on", everything else as text. Issues come back per field.
 */
export async function readForm<S extends z.ZodType>(
	request: Request,
	schema: S
): Promise<
	| { ok: true; data: z.infer<S>; raw: Record<string, string> }
	| { ok: false; raw: Record<string, string>; issues: ReadingIssue[] }
> {
	const fd = await request.formData();
	const raw: Record<string, string> = {};
	for (const [k, v] of fd.entries()) if (typeof v === 'string') raw[k] = v;
	const input: Record<string, unknown> = { ...raw };
	for (const k of ['override', 'accept']) input[k] = raw[k] === 'on' || raw[k] === 'true';
	const parsed = schema.safeParse(input);
	if (!parsed.success)
		return {
			ok: false,
			raw,
			issues: parsed.error.issues.map((i) => ({
				field: String(i.path[0] ?? ''),
				message: `${String(i.path[0] ?? 'form')}: ${i.message}`
			}))
		};
	return { ok: true, data: parsed.data, raw };
}

/** A refused form back to the page: which form, what was typed, each issue; nothing written. */
export function refuseForm(
	which: string,
	raw: Record<string, string>,
	e: unknown,
	extra: Record<string, unknown> = {}
) {
	if (!(e instanceof ReadingInputError)) throw e;
	return fail(400, { which, values: raw, issues: e.issues, ...extra });
}
