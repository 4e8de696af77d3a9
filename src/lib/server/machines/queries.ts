import type { Knex } from 'knex';
import { iso } from '../db/convert';
import type { MachineRow } from '../db/tables';

export interface MachineSummary {
	id: number;
	name: string;
	units: 'inch' | 'mm';
	zTravel: number;
	resolution: number;
	convention: string;
	controlStyle: string;
	toolCount: number;
	fixtureCount: number;
	lastReadingAt: string | null;
	referenceVersion: number | null;
	referenceEstablishedAt: string | null;
	runningSetup: string | null;
}

/**
 * Every active machine with its counts, in a fixed number of queries however many machines
 * the shop has (no query per machine). `trx` must be a shop transaction (withShop).
 */
export async function listMachineSummaries(trx: Knex.Transaction): Promise<MachineSummary[]> {
	const rows = await trx('machines as m')
		.whereNull('m.archived_at')
		.select(
			'm.id',
			'm.name',
			'm.units',
			'm.z_travel',
			'm.resolution',
			'm.convention',
			'm.control_style',
			trx.raw(
				'(select count(*) from tools t where t.machine_id = m.id and t.archived_at is null)::int as tool_count'
			),
			trx.raw(
				'(select count(*) from fixtures f where f.machine_id = m.id and f.archived_at is null)::int as fixture_count'
			),
			trx.raw(
				'(select max(taken_at) from readings r where r.machine_id = m.id) as last_reading_at'
			),
			trx.raw(
				'(select version from reference_surfaces rs where rs.machine_id = m.id order by version desc limit 1) as reference_version'
			),
			trx.raw(
				'(select established_at from reference_surfaces rs where rs.machine_id = m.id order by version desc limit 1) as reference_established_at'
			),
			trx.raw(
				"(select name from setups s where s.machine_id = m.id and s.status in ('on-machine', 'proven') order by created_at desc limit 1) as running_setup"
			)
		)
		.orderBy('m.name');
	return rows.map((r) => ({
		id: Number(r.id),
		name: r.name,
		units: r.units,
		zTravel: Number(r.z_travel),
		resolution: Number(r.resolution),
		convention: r.convention,
		controlStyle: r.control_style,
		toolCount: r.tool_count,
		fixtureCount: r.fixture_count,
		lastReadingAt: r.last_reading_at ? iso(r.last_reading_at) : null,
		referenceVersion: r.reference_version ?? null,
		referenceEstablishedAt: r.reference_established_at ? iso(r.reference_established_at) : null,
		runningSetup: r.running_setup ?? null
	}));
}

/** Active machines by name, for filters and pickers. `trx` is a shop transaction. */
export async function machineChoices(
	trx: Knex.Transaction
): Promise<{ id: number; name: string }[]> {
	const rows: Pick<MachineRow, 'id' | 'name'>[] = await trx('machines')
		.whereNull('archived_at')
		.orderBy('name')
		.select('id', 'name');
	return rows.map((m) => ({ id: Number(m.id), name: m.name }));
}

/** Whether any reading was taken on the machine (its units are then fixed). */
export async function machineHasReadings(
	trx: Knex.Transaction,
	machineId: number
): Promise<boolean> {
	return !!(await trx('readings').where({ machine_id: machineId }).first('id'));
}
