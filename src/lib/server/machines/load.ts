import { error } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { getMachine, type MachineRecord } from '../offsets/machine-state';

/** The machine named in the URL, or 404 (also for another shop's id: the schema has no such row). */
export async function machineFromParam(
	trx: Knex.Transaction,
	param: string | undefined
): Promise<MachineRecord> {
	const id = Number(param);
	const machine = Number.isSafeInteger(id) ? await getMachine(trx, id) : undefined;
	if (!machine) error(404, 'No such machine in this shop.');
	return machine;
}
