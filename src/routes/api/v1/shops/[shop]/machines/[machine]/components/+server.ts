import { error, json } from '@sveltejs/kit';
import {
	edgeReadingSchema,
	partMeasurementSchema,
	toolRegisterSchema
} from '$lib/schemas/components';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { actorOf } from '$lib/server/readings/form';
import { ReadingInputError } from '$lib/server/readings/input';
import { recordEdgeReading } from '$lib/server/components/edge';
import { currentComponents } from '$lib/server/components/store';
import {
	acceptPartWear,
	previewPartWear,
	recordToolRegister,
	toolRegisters
} from '$lib/server/components/tool-registers';
import type { RequestHandler } from './$types';

/**
 * The offset components beside Z (issue 20): GET the current X/Y of every work offset and the
 * tool registers as geometry + wear (any member). POST `{ type: 'edge' | 'register' | 'part',
 * ...fields }` records an edge reading (setups.write), sets a tool register or proposes /
 * accepts wear from a measured part (machines.write); `accept: false` on a part only proposes.
 * 201 recorded, 200 proposal, 400 refused with the field and why (a Stop without "override"
 * and a reason is refused on `overrideReason`). Same schemas and gate as the page.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const body = await withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const [components, registers] = await Promise.all([
			currentComponents(trx, machine.id),
			toolRegisters(trx, machine)
		]);
		return { machineId: machine.id, units: machine.units, components, ...registers };
	});
	return json(body, { headers: { 'cache-control': 'no-store' } });
};

const refused = (e: unknown) => {
	if (e instanceof ReadingInputError) return json({ issues: e.issues }, { status: 400 });
	throw e;
};

export const POST: RequestHandler = async (event) => {
	let input: Record<string, unknown>;
	try {
		input = await event.request.json();
	} catch {
		error(400, 'The body must be JSON.');
	}
	const type = input?.type;
	if (type !== 'edge' && type !== 'register' && type !== 'part')
		error(400, 'type must be "edge", "register" or "part".');
	const { shop, user } = await requireMember(
		event,
		type === 'edge' ? 'setups.write' : 'machines.write'
	);
	const schema =
		type === 'edge'
			? edgeReadingSchema
			: type === 'register'
				? toolRegisterSchema
				: partMeasurementSchema;
	const parsed = schema.safeParse(input);
	if (!parsed.success)
		return json(
			{
				issues: parsed.error.issues.map((i) => ({
					field: String(i.path[0] ?? ''),
					message: i.message
				}))
			},
			{ status: 400 }
		);
	const actor = actorOf(event, user);
	try {
		return await withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			if (type === 'edge') {
				const r = await recordEdgeReading(trx, machine, edgeReadingSchema.parse(input), actor);
				return json(r, { status: 201 });
			}
			if (type === 'register') {
				const r = await recordToolRegister(trx, machine, toolRegisterSchema.parse(input), actor);
				return json(r, { status: 201 });
			}
			const form = partMeasurementSchema.parse(input);
			if (!form.accept) return json({ proposal: await previewPartWear(trx, machine, form) });
			return json(await acceptPartWear(trx, machine, form, actor), { status: 201 });
		});
	} catch (e) {
		return refused(e);
	}
};
