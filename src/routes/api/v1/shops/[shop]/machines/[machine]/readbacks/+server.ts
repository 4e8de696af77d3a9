import { error, json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { listReadbacks, readbackValues } from '$lib/server/readbacks/queries';
import { recordReadback } from '$lib/server/readbacks/record';
import { machineVerification } from '$lib/server/readbacks/status';
import { actorOf } from '$lib/server/readings/form';
import { ReadingInputError } from '$lib/server/readings/record';
import { readbackSchema } from '$lib/schemas/readback';
import type { RequestHandler } from './$types';

/**
 * Read-backs at the control (issue 16). GET: past read-backs, newest first (`?limit=`, default
 * 20, at most 200), each register's verification, and with `?id=` one read-back's values. Any
 * member may read. POST: record one — JSON `{ source: 'file', fileName, text }` or
 * `{ source: 'typed', values: { work: { G54: '1.2500' }, tools: { 3: '-13.6182' } } }`, or a
 * multipart form with a `file` — and get the comparison back. Members who record readings may
 * record read-backs. A refused read-back answers 400 with `issues` and writes nothing.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const q = event.url.searchParams;
	const limit = q.get('limit') === null ? 20 : Number(q.get('limit'));
	if (!Number.isInteger(limit) || limit < 1 || limit > 200)
		error(400, 'limit must be a whole number from 1 to 200.');
	const idParam = q.get('id');
	const id = idParam === null ? null : Number(idParam);
	if (id !== null && (!Number.isSafeInteger(id) || id < 1))
		error(400, 'id must be a read-back number.');
	const body = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const readbacks = await listReadbacks(trx, machine.id, limit);
		const verification = await machineVerification(trx, machine.id);
		let values = undefined;
		if (id !== null) {
			const own = await trx('readbacks').where({ id, machine_id: machine.id }).first('id');
			if (!own) error(404, 'No such read-back on this machine.');
			values = await readbackValues(trx, id);
		}
		return { machineId: machine.id, readbacks, verification, ...(values ? { values } : {}) };
	});
	return json(
		{ ...body, asOf: new Date().toISOString() },
		{ headers: { 'cache-control': 'no-store' } }
	);
};

async function bodyOf(request: Request): Promise<unknown> {
	const type = request.headers.get('content-type') ?? '';
	if (type.includes('multipart/form-data')) {
		const form = await request.formData();
		const file = form.get('file');
		if (!(file instanceof File)) error(400, 'Send the control’s offset file as the field "file".');
		return {
			source: 'file',
			fileName: file.name,
			text: await file.text(),
			setupId: form.get('setupId') || undefined,
			note: form.get('note') ?? ''
		};
	}
	if (type.includes('application/json')) {
		try {
			return await request.json();
		} catch {
			error(400, 'The body is not valid JSON.');
		}
	}
	error(415, 'Send JSON or a multipart form with the file.');
}

export const POST: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'setups.write');
	const parsed = readbackSchema.safeParse(await bodyOf(event.request));
	if (!parsed.success) {
		return json(
			{
				message: 'The read-back was not recorded.',
				issues: parsed.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message }))
			},
			{ status: 400 }
		);
	}
	try {
		const recorded = await withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			return recordReadback(trx, shop.id, machine, actorOf(event, user), parsed.data);
		});
		return json(recorded, { status: 201 });
	} catch (e) {
		if (e instanceof ReadingInputError)
			return json(
				{ message: 'The read-back was not recorded.', issues: e.issues },
				{ status: 400 }
			);
		throw e;
	}
};
