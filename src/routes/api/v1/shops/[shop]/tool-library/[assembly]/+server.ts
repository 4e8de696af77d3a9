import { error, json } from '@sveltejs/kit';
import { measurementFormSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { assemblyParam, readBody, refuse } from '$lib/server/tool-library/api';
import { addMeasurement, getAssembly } from '$lib/server/tool-library/library';
import type { RequestHandler } from './$types';

/** One assembly: every measurement (newest first) and every pocket it was put in. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const id = assemblyParam(event.params.assembly);
	const assembly = id ? await withShop(shop, (trx) => getAssembly(trx, id)) : undefined;
	if (!assembly) error(404, 'No such assembly in this shop’s library.');
	return json({ assembly }, { headers: { 'cache-control': 'no-store' } });
};

/** A re-measure (measurementFormSchema): a new measurement row; 201, or 400 with the field. */
export const POST: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.write');
	const id = assemblyParam(event.params.assembly);
	if (!id) error(404, 'No such assembly in this shop’s library.');
	const body = await readBody(event, measurementFormSchema);
	if (!body.ok) return body.response;
	const r = await withShop(shop, (trx) =>
		addMeasurement(
			trx,
			id,
			body.data,
			{ id: user.id, email: user.email, ip: clientAddress(event) },
			shop.timeZone
		)
	);
	if (!r.ok)
		return refuse([{ field: r.field ?? 'assembly', message: r.message }], r.field ? 400 : 404);
	return json({ measurementId: r.id }, { status: 201 });
};
