import type { Knex } from 'knex';
import { assemblyFormSchema, assignFormSchema } from '$lib/schemas/tool-library';
import { getMachine } from '$lib/server/offsets/machine-state';
import { assignAssembly } from '$lib/server/tool-library/assign';
import { addAssembly } from '$lib/server/tool-library/library';
import type { DemoAssembly } from './demo-data';

/**
 * The tool library's demo assemblies (issue 20), through the same service the pages use, so
 * each pocket's H is the engine's and is recorded as a 'presetter' reading with its findings,
 * dated when it was put in; a later pocket ends the earlier (one assembly, one place).
 * `trx` has the shop's search path set.
 */
export async function seedAssemblies(
	trx: Knex.Transaction,
	assemblies: DemoAssembly[],
	ctx: { lead: number; ago: (days: number) => Date; timeZone: string }
): Promise<void> {
	const actor = { id: ctx.lead, email: '' };
	for (const a of assemblies) {
		const at = ctx.ago(a.daysAgo);
		const form = assemblyFormSchema.parse({
			name: a.name,
			holder: a.holder,
			cutter: a.cutter,
			stickOut: a.stickOut,
			units: a.units,
			gaugeLength: a.gaugeLength,
			radius: a.radius,
			presetter: a.presetter,
			measuredAt: ''
		});
		const added = await addAssembly(trx, form, actor, ctx.timeZone, at);
		if (!added.ok) throw new Error(`demo assembly ${a.name}: ${added.message}`);
		for (const p of a.pockets) {
			const m = await trx('machines').where({ name: p.machine }).first('id');
			const machine = await getMachine(trx, Number(m.id));
			await assignAssembly(
				trx,
				added.id,
				machine!,
				assignFormSchema.parse({ machineId: machine!.id, t: p.t }),
				actor,
				// When it was put in, so the board's "last reading" and the H's age read like a
				// real shop's (not "just now" at seed time).
				ctx.ago(p.daysAgo)
			);
		}
	}
}
