import { json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { programFromParams, versionResult } from '$lib/server/programs/load';
import type { RequestHandler } from './$types';

/**
 * A program: its versions (newest first) and the check of the version asked for (`?version=N`,
 * default newest) with the engine's findings and stats when done.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const body = await withShop(shop, async (trx) => {
		const { program } = await programFromParams(trx, event.params);
		const r = await versionResult(trx, program.id, event.url.searchParams.get('version'));
		return {
			program,
			versions: r.versions,
			version: r.version.version,
			check: r.detail ? { ...r.detail.check, result: r.detail.result } : null
		};
	});
	return json(body);
};
