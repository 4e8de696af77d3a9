import { json } from '@sveltejs/kit';
import { presetterImportSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { readBody } from '$lib/server/tool-library/api';
import { PRESETTER_CSV_MAX_BYTES } from '$lib/server/tool-library/presetter-csv';
import { importPresetterCsv } from '$lib/server/tool-library/presetter-import';
import type { RequestHandler } from './$types';

/** The past presetter imports, newest first. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const imports = await withShop(shop, (trx) =>
		trx('presetter_imports as i')
			.leftJoin('public.users as u', 'u.id', 'i.imported_by')
			.orderBy('i.id', 'desc')
			.limit(100)
			.select(
				'i.id',
				'i.file_name as fileName',
				'i.row_count as rows',
				'i.imported_at as at',
				'u.name as by'
			)
	);
	return json(
		{ imports, maxBytes: PRESETTER_CSV_MAX_BYTES },
		{ headers: { 'cache-control': 'no-store' } }
	);
};

/**
 * A presetter CSV ({ csv, fileName, preview }) read with the shop's mapping. `preview: true`
 * answers every row checked and writes nothing; otherwise all rows are imported or none:
 * 201 imported, 400 with the rows and their errors.
 */
export const POST: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.write');
	const body = await readBody(event, presetterImportSchema);
	if (!body.ok) return body.response;
	const r = await withShop(shop, (trx) =>
		importPresetterCsv(
			trx,
			body.data.csv,
			{ fileName: body.data.fileName, preview: body.data.preview, timeZone: shop.timeZone },
			{ id: user.id, email: user.email, ip: clientAddress(event) }
		)
	);
	if (!r.ok) return json(r, { status: 400 });
	return json(r, { status: r.preview ? 200 : 201 });
};
