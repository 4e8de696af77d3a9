import { error } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { componentFromParams, componentRecord } from '$lib/server/components/history';
import type { PageServerLoad } from './$types';

/** Every version of one component register (G54 X, H3 length wear, H3 radius), newest first. */
export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const p = componentFromParams(event.params.kind, event.params.register, event.params.component);
	if (!p) error(404, 'No such offset component (X or Y of a work offset; radius or wear of an H).');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const record = await componentRecord(trx, machine.id, p.kind, p.register, p.component);
		const known =
			p.kind === 'work'
				? await trx('fixtures')
						.where({ machine_id: machine.id, register: p.register })
						.first('name')
				: await trx('tools')
						.where({ machine_id: machine.id, h_number: Number(p.register) })
						.orderByRaw('archived_at is not null, id desc')
						.first('t_number', 'description');
		if (!known && record.rows.length === 0) error(404, `${machine.name} has no ${record.label}.`);
		return {
			machine,
			...p,
			...record,
			what:
				p.kind === 'work'
					? `${known?.name ?? ''}`
					: known
						? `T${known.t_number} ${known.description}`
						: ''
		};
	});
};
