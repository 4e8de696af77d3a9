import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { z } from 'zod';
import { can } from '$lib/permissions';
import { toolFormSchema, toolIdSchema } from '$lib/schemas/tool';
import { clientAddress } from '$lib/server/auth/client-address';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { machineOverview } from '$lib/server/offsets/overview';
import { libraryToolsOf } from '$lib/server/tool-library/placement';
import { parseToolCsv, TOOL_CSV_MAX_BYTES } from '$lib/server/tools/csv';
import {
	activeHNumbers,
	activeTNumbers,
	addTool,
	archiveTool,
	importTools
} from '$lib/server/tools/service';
import type { Actions, PageServerLoad } from './$types';

const importChoiceSchema = z.object({
	csvText: z.string().min(1, 'Upload the CSV again.'),
	mode: z.enum(['valid', 'all-or-nothing'], { message: 'Choose what to import.' })
});

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const overview = await machineOverview(trx, machine);
		// Tools that hold a tool-library assembly now (tool id → assembly), for the "from the library" link.
		const library = Object.fromEntries(await libraryToolsOf(trx, machine.id));
		return {
			machine,
			tools: overview.toolRows,
			library,
			form: await superValidate(zod4(toolFormSchema), { id: 'add-tool' }),
			canEdit: can(role, 'machines.write'),
			maxKb: TOOL_CSV_MAX_BYTES / 1024
		};
	});
};

export const actions: Actions = {
	add: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const form = await superValidate(await event.request.formData(), zod4(toolFormSchema), {
			id: 'add-tool'
		});
		if (!form.valid) return fail(400, { form });
		return withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			const d = form.data;
			const r = await addTool(
				trx,
				machine.id,
				{
					...d,
					stickout: d.stickout ?? null,
					nominalLength: d.nominalLength ?? null
				},
				user,
				clientAddress(event)
			);
			if (!r.ok) return setError(form, 't', r.message);
			return message(form, `T${d.t} added.`);
		});
	},
	archive: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const parsed = toolIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { notice: { ok: false, text: 'Unknown tool.' } });
		return withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			const r = await archiveTool(trx, machine.id, parsed.data.toolId, user, clientAddress(event));
			return r.ok
				? { notice: { ok: true, text: 'Tool archived; its readings stay in the record.' } }
				: fail(404, { notice: { ok: false, text: r.message } });
		});
	},
	preview: async (event) => {
		const { shop } = await requireMember(event, 'machines.write');
		const data = await event.request.formData();
		const file = data.get('file');
		if (!(file instanceof File) || file.size === 0)
			return fail(400, { importError: 'Choose a CSV file to upload.' });
		if (file.size > TOOL_CSV_MAX_BYTES)
			return fail(400, {
				importError: `"${file.name}" is ${Math.ceil(file.size / 1024)} KB; the limit is ${TOOL_CSV_MAX_BYTES / 1024} KB.`
			});
		if (!/\.(csv|txt)$/i.test(file.name))
			return fail(400, { importError: `"${file.name}" is not a .csv file.` });
		const text = await file.text();
		return withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			const parsed = parseToolCsv(
				text,
				await activeTNumbers(trx, machine.id),
				await activeHNumbers(trx, machine.id)
			);
			if (!parsed.ok) return fail(400, { importError: parsed.message });
			return { preview: { fileName: file.name, csvText: text, rows: parsed.rows } };
		});
	},
	import: async (event) => {
		const { shop, user } = await requireMember(event, 'machines.write');
		const choice = importChoiceSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!choice.success) return fail(400, { importError: choice.error.issues[0].message });
		return withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			// Re-check against the rack as it is now: someone may have added a tool since the preview.
			const parsed = parseToolCsv(
				choice.data.csvText,
				await activeTNumbers(trx, machine.id),
				await activeHNumbers(trx, machine.id)
			);
			if (!parsed.ok) return fail(400, { importError: parsed.message });
			const r = await importTools(
				trx,
				machine.id,
				parsed.rows,
				choice.data.mode,
				user,
				clientAddress(event)
			);
			// A parallel import of the same tools: 409 with what happened, not a bare 500.
			if (!r.ok && 'conflict' in r) return fail(409, { importError: r.message });
			if (!r.ok)
				return fail(400, {
					importError: r.message,
					preview: { fileName: '', csvText: choice.data.csvText, rows: parsed.rows }
				});
			redirect(303, `/shops/${shop.slug}/machines/${machine.id}/tools?imported=${r.imported}`);
		});
	}
};
