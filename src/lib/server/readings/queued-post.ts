import { json, type RequestEvent } from '@sveltejs/kit';
import { queuedReadingSchema, type QueuedReadingAnswer } from '$lib/schemas/queued-reading';
import { withShop } from '../db/tenant';
import type { Member } from '../guard';
import { machineFromParam } from '../machines/load';
import { actorOf } from './form';
import { formUrlFor, recordQueuedReading } from './queued';
import { ReadingInputError } from './record';

const STATUS: Record<QueuedReadingAnswer['outcome'], number> = {
	saved: 201,
	duplicate: 200,
	'needs-decision': 409,
	refused: 400
};

const isUniqueViolation = (e: unknown) =>
	(e as { code?: string; constraint?: string })?.code === '23505' &&
	(e as { constraint?: string }).constraint === 'readings_client_key_unique';

/** The POST handler's body, after the guard: parse, record (once), answer. */
export async function queuedReadingPost(event: RequestEvent, member: Member): Promise<Response> {
	const { shop, user } = member;
	let body: unknown;
	try {
		body = await event.request.json();
	} catch {
		return json(
			{ outcome: 'refused', issues: [{ field: '', message: 'The body must be JSON.' }] },
			{ status: 400 }
		);
	}
	const parsed = queuedReadingSchema.safeParse(body);
	if (!parsed.success) {
		return json(
			{
				outcome: 'refused',
				issues: parsed.error.issues.map((i) => ({
					field: i.path.join('.'),
					message: i.message
				}))
			},
			{ status: 400 }
		);
	}
	const q = parsed.data;
	const record = () =>
		withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine!);
			try {
				return await recordQueuedReading(trx, shop.slug, machine, q, actorOf(event, user));
			} catch (e) {
				if (!(e instanceof ReadingInputError)) throw e;
				return {
					outcome: 'refused',
					issues: e.issues,
					formUrl: formUrlFor(shop.slug, machine.id, q)
				} satisfies QueuedReadingAnswer;
			}
		});
	let answer: QueuedReadingAnswer;
	try {
		answer = await record();
	} catch (e) {
		// The same key sent twice at once: the other request recorded it; answer as a duplicate.
		if (!isUniqueViolation(e)) throw e;
		answer = await record();
	}
	return json(answer, { status: STATUS[answer.outcome], headers: { 'cache-control': 'no-store' } });
}
