import { error, json } from '@sveltejs/kit';
import { assignFormSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { getMachine } from '$lib/server/offsets/machine-state';
import { ReadingInputError } from '$lib/server/readings/input';
import { assemblyParam, readBody, refuse } from '$lib/server/tool-library/api';
import { assignAssembly, previewAssignment } from '$lib/server/tool-library/assign';
import { getAssembly } from '$lib/server/tool-library/library';
import type { RequestHandler } from './$types';

/** Every pocket the assembly was put in, newest first, with the H each assignment recorded. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const id = assemblyParam(event.params.assembly);
	const assembly = id ? await withShop(shop, (trx) => getAssembly(trx, id)) : undefined;
	if (!assembly) error(404, 'No such assembly in this shop’s library.');
	return json({ assignments: assembly.assignments }, { headers: { 'cache-control': 'no-store' } });
};

/**
 * Puts the assembly in a machine pocket (assignFormSchema): its H for that machine's convention,
 * recorded as a 'presetter' reading. `?preview=1` answers the worked-out H and its findings and
 * writes nothing. 201 recorded; 400 refused with the field and why (a Stop needs `override`
 * and `overrideReason`).
 */
export const POST: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.write');
	const id = assemblyParam(event.params.assembly);
	if (!id) error(404, 'No such assembly in this shop’s library.');
	const body = await readBody(event, assignFormSchema);
	if (!body.ok) return body.response;
	const preview = event.url.searchParams.get('preview') === '1';
	try {
		return await withShop(shop, async (trx) => {
			const machine = await getMachine(trx, body.data.machineId);
			if (!machine)
				throw ReadingInputError.of('machineId', 'That machine is not in this shop (or archived).');
			if (preview) {
				const plan = await previewAssignment(trx, id, machine, body.data);
				return json({ preview: plan.preview, t: plan.t, h: plan.h, newTool: plan.tool === null });
			}
			const r = await assignAssembly(trx, id, machine, body.data, {
				id: user.id,
				email: user.email,
				ip: clientAddress(event)
			});
			return json(
				{
					assignmentId: r.assignmentId,
					readingId: r.readingId,
					offsetVersionId: r.offsetVersionId,
					toolId: r.toolId,
					h: r.plan.h,
					value: r.preview.value,
					units: machine.units,
					working: r.preview.working
				},
				{ status: 201 }
			);
		});
	} catch (e) {
		if (!(e instanceof ReadingInputError)) throw e;
		return refuse(e.issues);
	}
};
