import { json, type RequestEvent } from '@sveltejs/kit';
import type { z } from 'zod';

/** 400 answer: the field and why, for each problem (the API's refusal shape). */
export const refuse = (issues: { field: string; message: string }[], status = 400) =>
	json({ message: issues.map((i) => i.message).join(' '), issues }, { status });

/** A JSON body read by a shared schema, or the 400 answer saying what is wrong. */
export async function readBody<S extends z.ZodType>(
	event: RequestEvent,
	schema: S
): Promise<{ ok: true; data: z.infer<S> } | { ok: false; response: Response }> {
	const body = await event.request.json().catch(() => undefined);
	if (body === undefined || body === null || typeof body !== 'object')
		return {
			ok: false,
			response: refuse([{ field: '', message: 'Send a JSON object as the request body.' }])
		};
	const parsed = schema.safeParse(body);
	if (!parsed.success)
		return {
			ok: false,
			response: refuse(
				parsed.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message }))
			)
		};
	return { ok: true, data: parsed.data };
}

/** The [assembly] route parameter as an id, or null. */
export function assemblyParam(param: string): number | null {
	return /^\d{1,15}$/.test(param) && Number(param) > 0 ? Number(param) : null;
}
