import type { Knex } from 'knex';
import { iso } from '../db/convert';
import type { SetupRow } from '../db/tables';
import type { MachineChoice, SetupState } from '$lib/schemas/setups';

/** Lists of setups and the setup form's choices. `trx` is always a shop transaction (withShop). */

export interface SetupSummary {
	id: number;
	name: string;
	job: string;
	status: SetupState;
	machineId: number;
	machineName: string;
	fixtureCount: number;
	opCount: number;
	createdAt: string;
	createdByName: string | null;
}

/** Setups of the shop, newest first, optionally for one machine and/or in one state. */
export async function listSetups(
	trx: Knex.Transaction,
	filter: { machineId?: number | null; status?: SetupState | null } = {}
): Promise<SetupSummary[]> {
	const q = trx('setups as s')
		.join('machines as m', 'm.id', 's.machine_id')
		.leftJoin('public.users as u', 'u.id', 's.created_by')
		.select(
			's.id',
			's.name',
			's.job',
			's.status',
			's.machine_id',
			's.created_at',
			'm.name as machine_name',
			'u.name as created_by_name',
			trx.raw('(select count(*) from setup_fixtures sf where sf.setup_id = s.id)::int as fx'),
			trx.raw('(select count(*) from setup_ops so where so.setup_id = s.id)::int as ops')
		)
		.orderBy([
			{ column: 's.created_at', order: 'desc' },
			{ column: 's.id', order: 'desc' }
		]);
	if (filter.machineId) q.where('s.machine_id', filter.machineId);
	if (filter.status) q.where('s.status', filter.status);
	const rows = await q;
	return rows.map((r) => ({
		id: Number(r.id),
		name: r.name,
		job: r.job,
		status: r.status,
		machineId: Number(r.machine_id),
		machineName: r.machine_name,
		fixtureCount: r.fx,
		opCount: r.ops,
		createdAt: iso(r.created_at),
		createdByName: r.created_by_name ?? null
	}));
}

/** The machine's newest setups, for the machine page. */
export async function recentMachineSetups(
	trx: Knex.Transaction,
	machineId: number,
	limit = 10
): Promise<{ id: number; name: string; job: string; status: SetupState }[]> {
	const rows: Pick<SetupRow, 'id' | 'name' | 'job' | 'status'>[] = await trx('setups')
		.where({ machine_id: machineId })
		.orderBy('created_at', 'desc')
		.limit(limit)
		.select('id', 'name', 'job', 'status');
	return rows.map((s) => ({
		id: Number(s.id),
		name: s.name,
		job: s.job,
		status: s.status as SetupState
	}));
}

/** Active machines with their fixtures and tools, for the setup form's pickers. */
export async function setupChoices(trx: Knex.Transaction): Promise<MachineChoice[]> {
	const machines = await trx('machines').whereNull('archived_at').orderBy('name');
	const fixtures = await trx('fixtures')
		.whereNull('archived_at')
		.orderBy('register')
		.select('id', 'machine_id', 'register', 'name');
	const tools = await trx('tools')
		.whereNull('archived_at')
		.orderBy('t_number')
		.select('id', 'machine_id', 't_number', 'h_number', 'description');
	return machines.map((m) => ({
		id: Number(m.id),
		name: m.name,
		units: m.units,
		resolution: Number(m.resolution),
		zTravel: Number(m.z_travel),
		fixtures: fixtures
			.filter((f) => Number(f.machine_id) === Number(m.id))
			.map((f) => ({ id: Number(f.id), register: f.register, name: f.name })),
		tools: tools
			.filter((t) => Number(t.machine_id) === Number(m.id))
			.map((t) => ({
				id: Number(t.id),
				t: t.t_number,
				h: t.h_number,
				description: t.description
			}))
	}));
}

/** Setup `setupId` if it is on this machine (the URL may name another machine's), else undefined. */
export async function setupOnMachine(
	trx: Knex.Transaction,
	setupId: number,
	machineId: number
): Promise<{ id: number; name: string } | undefined> {
	const row: Pick<SetupRow, 'id' | 'name'> | undefined = await trx('setups')
		.where({ id: setupId, machine_id: machineId })
		.first('id', 'name');
	return row && { id: Number(row.id), name: row.name };
}
