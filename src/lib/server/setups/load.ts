import { error } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { getSetupDetail, setupTable, type SetupDetail } from './detail';
import type { ProgramComponents } from '../components/load-program';
import { buildLoadProgram, fileSlug, type LoadProgramResult } from './load-program';

/** The setup named in the URL, or 404 (also for another shop's id: the schema has no such row). */
export async function setupFromParam(
	trx: Knex.Transaction,
	param: string | undefined
): Promise<SetupDetail> {
	const id = Number(param);
	const setup = Number.isSafeInteger(id) ? await getSetupDetail(trx, id) : undefined;
	if (!setup) error(404, 'No such setup in this shop.');
	return setup;
}

/**
 * The setup's load program (its fixtures' and tools' registers only), or why not. Stop and stale
 * registers are withheld unless `includeFlaggedBy` (a lead's name) includes them with warnings.
 */
export function setupLoadProgram(
	setup: SetupDetail,
	includeFlaggedBy?: string,
	components?: ProgramComponents
): LoadProgramResult {
	const { table, missing } = setupTable(setup);
	return buildLoadProgram(setup.machine, table, {
		title: `${setup.machine.name} ${setup.name}`,
		filename: fileSlug(setup.machine.name, setup.name),
		missing,
		gate: {
			rows: [...setup.fixtures.map((f) => f.gate), ...setup.tools.map((t) => t.gate)],
			...(includeFlaggedBy ? { includeFlaggedBy } : {})
		},
		...(components ? { components } : {})
	});
}
