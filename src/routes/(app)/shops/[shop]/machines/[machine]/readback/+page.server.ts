import { error, fail } from '@sveltejs/kit';
import { registerForMachine } from '$lib/offsets';
import { can } from '$lib/permissions';
import { readbackSchema } from '$lib/schemas/readback';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { listReadbacks } from '$lib/server/readbacks/queries';
import { recordReadback, setupRegistersOf } from '$lib/server/readbacks/record';
import { machineVerification } from '$lib/server/readbacks/status';
import { actorOf } from '$lib/server/readings/form';
import { ReadingInputError } from '$lib/server/readings/record';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

/**
 * Read back at the control (issue 16): type what the control shows in a grid laid out like its
 * registers, or upload its saved offset file; the comparison comes back per register. With
 * `?setup=<id>` the grid holds that setup's registers only.
 */
export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const setupParam = event.url.searchParams.get('setup');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		let setup: { id: number; name: string } | null = null;
		let only: { work: string[]; tools: string[] } | null = null;
		if (setupParam !== null) {
			const row = await trx('setups')
				.where({ id: Number(setupParam) || 0, machine_id: machine.id })
				.first('id', 'name');
			if (!row) error(404, 'No such setup on this machine.');
			setup = { id: Number(row.id), name: row.name };
			only = await setupRegistersOf(trx, setup.id);
		}
		const verification = await machineVerification(trx, machine.id);
		const fixtures = await trx('fixtures')
			.where({ machine_id: machine.id })
			.whereNull('archived_at')
			.select('register', 'name');
		const tools = await trx('tools')
			.where({ machine_id: machine.id })
			.select('h_number', 't_number', 'description');
		const fixtureName = new Map(fixtures.map((f) => [f.register, f.name]));
		const toolName = new Map(
			tools.map((t) => [String(t.h_number), `T${t.t_number} ${t.description}`])
		);
		const keep = (kind: 'work' | 'tool', register: string) =>
			!only || (kind === 'work' ? only.work : only.tools).includes(register);
		const registers = verification
			.filter((v) => keep(v.kind, v.register))
			.map((v) => ({
				...v,
				label:
					v.kind === 'tool'
						? `H${v.register}`
						: registerForMachine(v.register, machine.extendedAddress),
				name: (v.kind === 'tool' ? toolName.get(v.register) : fixtureName.get(v.register)) ?? ''
			}));
		const order = (r: { kind: string; register: string }) =>
			r.kind === 'work'
				? r.register.startsWith('G54.1')
					? 100 + Number(r.register.split('P')[1])
					: Number(r.register.slice(1))
				: 10_000 + Number(r.register);
		registers.sort((a, b) => order(a) - order(b));
		return {
			machine,
			setup,
			registers,
			readbacks: await listReadbacks(trx, machine.id, 10),
			canRecord: can(role, 'setups.write')
		};
	});
};

type Member = Awaited<ReturnType<typeof requireMember>>;

async function record(event: RequestEvent, { shop, user }: Member, body: unknown) {
	const parsed = readbackSchema.safeParse(body);
	if (!parsed.success)
		return fail(400, {
			issues: parsed.error.issues.map((i) => ({ field: i.path.join('.'), message: i.message }))
		});
	try {
		const recorded = await withShop(shop, async (trx) => {
			const machine = await machineFromParam(trx, event.params.machine);
			return recordReadback(trx, shop.id, machine, actorOf(event, user), parsed.data);
		});
		return { recorded };
	} catch (e) {
		if (e instanceof ReadingInputError) return fail(400, { issues: e.issues });
		throw e;
	}
}

export const actions: Actions = {
	/** Values typed from the control's screen: fields named `work:G54`, `tools:3`. */
	typed: async (event) => {
		const member = await requireMember(event, 'setups.write');
		const form = await event.request.formData();
		const values: Record<'work' | 'tools', Record<string, string>> = { work: {}, tools: {} };
		for (const [name, value] of form) {
			const m = /^(work|tools):(.+)$/.exec(name);
			if (m && typeof value === 'string' && value.trim() !== '')
				values[m[1] as 'work' | 'tools'][m[2]] = value;
		}
		const typedValues = Object.fromEntries(
			[...form].filter(([n, v]) => /^(work|tools):/.test(n) && typeof v === 'string')
		) as Record<string, string>;
		const result = await record(event, member, {
			source: 'typed',
			values,
			setupId: form.get('setupId') || undefined
		});
		return 'status' in result && result.status === 400
			? fail(400, { ...result.data, typed: typedValues })
			: result;
	},
	/** The control's saved offset file. */
	file: async (event) => {
		const member = await requireMember(event, 'setups.write');
		const form = await event.request.formData();
		const file = form.get('file');
		if (!(file instanceof File) || file.size === 0)
			return fail(400, {
				issues: [{ field: 'file', message: 'Choose the offset file the control saved.' }]
			});
		return record(event, member, {
			source: 'file',
			fileName: file.name,
			text: await file.text(),
			setupId: form.get('setupId') || undefined
		});
	}
};
