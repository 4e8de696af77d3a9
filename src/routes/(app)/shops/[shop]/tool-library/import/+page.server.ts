import { fail, redirect } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { presetterImportSchema, presetterMappingSchema } from '$lib/schemas/tool-library';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { PRESETTER_CSV_MAX_BYTES } from '$lib/server/tool-library/presetter-csv';
import {
	currentMapping,
	importPresetterCsv,
	saveMapping
} from '$lib/server/tool-library/presetter-import';
import type { Actions, PageServerLoad } from './$types';

const ID = 'presetter-mapping';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.write');
	const mapping = await withShop(shop, (trx) => currentMapping(trx));
	return {
		mapped: mapping !== null,
		form: mapping
			? await superValidate(mapping, zod4(presetterMappingSchema), { id: ID })
			: await superValidate(zod4(presetterMappingSchema), { id: ID }),
		maxKb: PRESETTER_CSV_MAX_BYTES / 1024
	};
};

export const actions: Actions = {
	mapping: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const form = await superValidate(await event.request.formData(), zod4(presetterMappingSchema), {
			id: ID
		});
		if (!form.valid) return fail(400, { form });
		await withShop(shop, (trx) =>
			saveMapping(trx, form.data, { id: user.id, email: user.email, ip: clientAddress(event) })
		);
		return message(form, 'Mapping saved. Every import from now on reads the file this way.');
	},
	preview: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const data = await event.request.formData();
		const file = data.get('file');
		if (!(file instanceof File) || file.size === 0)
			return fail(400, { importError: 'Choose the presetter’s CSV file to upload.' });
		if (file.size > PRESETTER_CSV_MAX_BYTES)
			return fail(400, {
				importError: `"${file.name}" is ${Math.ceil(file.size / 1024)} KB; the limit is ${PRESETTER_CSV_MAX_BYTES / 1024} KB.`
			});
		if (!/\.(csv|txt)$/i.test(file.name))
			return fail(400, { importError: `"${file.name}" is not a .csv file.` });
		const text = await file.text();
		const r = await withShop(shop, (trx) =>
			importPresetterCsv(
				trx,
				text,
				{ fileName: file.name, preview: true, timeZone: shop.timeZone },
				{ id: user.id, email: user.email }
			)
		);
		if (!r.ok) return fail(400, { importError: r.message });
		if (!r.preview) return fail(500, { importError: 'Unexpected import.' });
		return {
			preview: { fileName: file.name, csvText: text, rows: r.rows, units: r.mapping.units }
		};
	},
	import: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const fd = Object.fromEntries(await event.request.formData());
		const parsed = presetterImportSchema.safeParse({
			csv: fd.csvText,
			fileName: fd.fileName ?? '',
			preview: false
		});
		if (!parsed.success) return fail(400, { importError: parsed.error.issues[0].message });
		const r = await withShop(shop, (trx) =>
			importPresetterCsv(
				trx,
				parsed.data.csv,
				{ fileName: parsed.data.fileName, preview: false, timeZone: shop.timeZone },
				{ id: user.id, email: user.email, ip: clientAddress(event) }
			)
		);
		if (!r.ok)
			return fail(400, {
				importError: r.message,
				...(r.rows
					? {
							preview: {
								fileName: parsed.data.fileName,
								csvText: parsed.data.csv,
								rows: r.rows,
								units: r.mapping!.units
							}
						}
					: {})
			});
		if (r.preview) return fail(500, { importError: 'Unexpected preview.' });
		redirect(303, `/shops/${shop.slug}/tool-library?imported=${r.imported}&created=${r.created}`);
	}
};
