import { error, json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { setupFromParam } from '$lib/server/setups/load';
import { readSetupPhoto } from '$lib/server/setups/photos';
import type { RequestHandler } from './$types';

/**
 * A setup's photos, for members only (photos never sit in static/): `?id=<photo>` answers the
 * image itself; without it, the list of the setup's photos with their URLs.
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const id = event.url.searchParams.get('id');
	const base = `/shops/${shop.slug}/setups/${event.params.setup}/photos`;
	if (id === null) {
		const setup = await withShop(shop, (trx) => setupFromParam(trx, event.params.setup));
		return json({ photos: setup.photos.map((p) => ({ ...p, url: `${base}?id=${p.id}` })) });
	}
	const photo = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		return readSetupPhoto(trx, setup.id, Number(id));
	});
	if (!photo) error(404, 'No such photo in this setup.');
	return new Response(new Uint8Array(photo.bytes), {
		headers: {
			'content-type': photo.type,
			'content-length': String(photo.bytes.byteLength),
			'content-disposition': 'inline',
			'cache-control': 'private, max-age=3600'
		}
	});
};
