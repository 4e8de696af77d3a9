import { error } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { readMachinePhoto } from '$lib/server/machines/photo';
import type { RequestHandler } from './$types';

/** The machine's photo, for members only (uploads never sit in static/). */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const photo = await withShop(shop, async (trx) =>
		readMachinePhoto(trx, (await machineFromParam(trx, event.params.machine)).id)
	);
	if (!photo) error(404, 'This machine has no photo yet.');
	return new Response(new Uint8Array(photo.bytes), {
		headers: {
			'content-type': photo.type,
			'content-length': String(photo.bytes.byteLength),
			'cache-control': 'private, max-age=60'
		}
	});
};
