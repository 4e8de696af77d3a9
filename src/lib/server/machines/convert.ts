import type { Knex } from 'knex';
import {
	convertTable,
	spindleZ,
	type Convention,
	type ConversionGeometry,
	type OffsetTable
} from '$lib/offsets';
import { audit } from '../audit';
import {
	currentOffsets,
	listReferences,
	tableFrom,
	type MachineRecord
} from '../offsets/machine-state';
import type { Actor } from './service';

export interface PairCheck {
	register: string;
	h: string;
	before: number;
	after: number;
}

export interface ConversionPlan {
	from: OffsetTable;
	to: OffsetTable;
	/** Spindle Z at program zero (W + H, NISTIR 6556 composition) for every fixture/tool pair, before and after. */
	pairs: PairCheck[];
}

/**
 * Works out a machine's table in another convention without saving anything. The engine keeps
 * W_k + H_i for every pair; `pairs` shows it so the lead can see it, and `convertMachine`
 * refuses to save if any pair moved (it never should).
 */
export async function planConversion(
	trx: Knex.Transaction,
	machine: MachineRecord,
	target: Convention,
	geometry: ConversionGeometry
): Promise<ConversionPlan> {
	const from = tableFrom(machine, await currentOffsets(trx, machine.id));
	const to = convertTable(from, target, geometry);
	const pairs: PairCheck[] = [];
	for (const register of Object.keys(from.work)) {
		for (const h of Object.keys(from.tools)) {
			pairs.push({
				register,
				h,
				before: spindleZ(from.work[register], from.tools[h]),
				after: spindleZ(to.work[register], to.tools[h])
			});
		}
	}
	return { from, to, pairs };
}

/** Converts and records: the machine's convention, a new offset version of every register, an audit entry — one transaction. */
export async function convertMachine(
	trx: Knex.Transaction,
	machine: MachineRecord,
	target: Convention,
	geometry: ConversionGeometry,
	by: Actor,
	ip = ''
): Promise<ConversionPlan> {
	const plan = await planConversion(trx, machine, target, geometry);
	const moved = plan.pairs.filter((p) => Math.abs(p.before - p.after) > 1e-9);
	if (moved.length > 0)
		throw new Error(`conversion moved ${moved.length} spindle Z value(s); nothing saved`);
	const [reference] = await listReferences(trx, machine.id);
	await trx('machines')
		.where({ id: machine.id })
		.update({
			convention: target,
			master_tool_h: target === 'master-tool' ? Number(plan.to.masterTool) : null
		});
	const rows = [
		...Object.entries(plan.to.work).map(([register, value]) => ({
			register_kind: 'work',
			register,
			value
		})),
		...Object.entries(plan.to.tools).map(([register, value]) => ({
			register_kind: 'tool',
			register,
			value
		}))
	].map((r) => ({
		...r,
		machine_id: machine.id,
		units: machine.units,
		convention: target,
		reading_id: null,
		reference_version: reference?.version ?? 1,
		created_by: by.id
	}));
	if (rows.length > 0) await trx('offset_versions').insert(rows);
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'machine.convention-converted',
		target: machine.name,
		detail: { from: machine.convention, to: target, registers: rows.length, ...geometry },
		ip
	});
	return plan;
}
