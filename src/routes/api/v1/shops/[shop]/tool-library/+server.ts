import { json } from '@sveltejs/kit';
import { assemblyFormSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { readBody, refuse } from '$lib/server/tool-library/api';
import { addAssembly, getAssembly, listAssemblies } from '$lib/server/tool-library/library';
import type { RequestHandler } from './$types';

/** The shop's tool library: every assembly with its newest measurement. Any member may read. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const assemblies = await withShop(shop, (trx) => listAssemblies(trx));
	return json({ assemblies }, { headers: { 'cache-control': 'no-store' } });
};

/** A new assembly with its first measurement (assemblyFormSchema): 201, or 400 with the field. */
export const POST: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.write');
	const body = await readBody(event, assemblyFormSchema);
	if (!body.ok) return body.response;
	const r = await withShop(shop, async (trx) => {
		const added = await addAssembly(
			trx,
			body.data,
			{ id: user.id, email: user.email, ip: clientAddress(event) },
			shop.timeZone
		);
		return added.ok ? { ok: true as const, assembly: await getAssembly(trx, added.id) } : added;
	});
	if (!r.ok) return refuse([{ field: r.field ?? '', message: r.message }]);
	return json({ assembly: r.assembly }, { status: 201 });
};
