import { json } from '@sveltejs/kit';
import { presetterMappingSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { readBody } from '$lib/server/tool-library/api';
import { currentMapping, saveMapping } from '$lib/server/tool-library/presetter-import';
import type { RequestHandler } from './$types';

/** The shop's presetter CSV mapping (null before the first one is saved). */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const mapping = await withShop(shop, (trx) => currentMapping(trx));
	return json({ mapping }, { headers: { 'cache-control': 'no-store' } });
};

/** Saves a new mapping (presetterMappingSchema); earlier ones stay on record. */
export const PUT: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.write');
	const body = await readBody(event, presetterMappingSchema);
	if (!body.ok) return body.response;
	await withShop(shop, (trx) =>
		saveMapping(trx, body.data, { id: user.id, email: user.email, ip: clientAddress(event) })
	);
	return json({ mapping: body.data });
};
