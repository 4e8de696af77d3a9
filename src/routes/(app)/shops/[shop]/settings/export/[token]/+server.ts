import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { Readable } from 'node:stream';
import { error } from '@sveltejs/kit';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import { exportForToken } from '$lib/server/shops/export';
import type { RequestHandler } from './$types';

/** The e-mailed download link: an owner of the shop, the right token, not expired. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'shop.export');
	const found = await exportForToken(db(), shop, event.params.token);
	if (!found) error(404, 'Not found');
	if ('expired' in found) {
		error(410, 'This download link has expired. Start a new export on the Settings page.');
	}
	const info = await stat(found.path).catch(() => null);
	if (!info) error(410, 'This export is no longer kept. Start a new one on the Settings page.');
	return new Response(Readable.toWeb(createReadStream(found.path)) as ReadableStream, {
		headers: {
			'content-type': 'application/zip',
			'content-length': String(info.size),
			'content-disposition': `attachment; filename="${found.fileName}"`,
			'cache-control': 'no-store'
		}
	});
};
