import type { Knex } from 'knex';
import { audit } from '../audit';
import { isUniqueViolation } from '../db/errors';
import type { Actor, ServiceResult } from '../machines/service';
import type { ParsedToolRow } from './csv';

export interface NewTool {
	t: number;
	h: number;
	description: string;
	holder: string;
	stickout: number | null;
	nominalLength: number | null;
}

export async function activeTNumbers(
	trx: Knex.Transaction,
	machineId: number
): Promise<Set<number>> {
	return new Set(
		(
			await trx('tools').where({ machine_id: machineId }).whereNull('archived_at').pluck('t_number')
		).map(Number)
	);
}

/** H numbers of the rack's active tools → the T number using each (CSV import refuses a clash). */
export async function activeHNumbers(
	trx: Knex.Transaction,
	machineId: number
): Promise<Map<number, number>> {
	const rows = await trx('tools')
		.where({ machine_id: machineId })
		.whereNull('archived_at')
		.select('h_number', 't_number');
	return new Map(rows.map((r) => [Number(r.h_number), Number(r.t_number)]));
}

const row = (machineId: number, t: NewTool) => ({
	machine_id: machineId,
	t_number: t.t,
	h_number: t.h,
	description: t.description,
	holder: t.holder,
	stickout: t.stickout,
	nominal_length: t.nominalLength
});

export async function addTool(
	trx: Knex.Transaction,
	machineId: number,
	tool: NewTool,
	by: Actor,
	ip = ''
): Promise<ServiceResult> {
	if ((await activeTNumbers(trx, machineId)).has(tool.t)) {
		return {
			ok: false,
			field: 't',
			message: `T${tool.t} is already in this machine's rack; archive that tool first or pick another pocket.`
		};
	}
	await trx('tools').insert(row(machineId, tool));
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'tool.added',
		target: `T${tool.t}`,
		detail: { h: tool.h, description: tool.description },
		ip
	});
	return { ok: true };
}

/** Archiving keeps the tool's readings and history; the T pocket becomes free. */
export async function archiveTool(
	trx: Knex.Transaction,
	machineId: number,
	toolId: number,
	by: Actor,
	ip = ''
): Promise<ServiceResult> {
	const [t] = await trx('tools')
		.where({ id: toolId, machine_id: machineId })
		.whereNull('archived_at')
		.update({ archived_at: trx.fn.now() })
		.returning('t_number');
	if (!t) return { ok: false, message: 'That tool is not in this machine’s rack.' };
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'tool.archived',
		target: `T${t.t_number}`,
		ip
	});
	return { ok: true };
}

export const IMPORT_CONFLICT =
	'Another import or edit added tools to this rack at the same moment, so nothing from this file was imported. Check the rack, then upload the file again.';

/**
 * Imports checked CSV rows. `mode` is the user's explicit choice when some rows have errors:
 * 'valid' imports the rows without errors, 'all-or-nothing' imports only when every row is good.
 * One transaction either way.
 */
export async function importTools(
	trx: Knex.Transaction,
	machineId: number,
	rows: ParsedToolRow[],
	mode: 'valid' | 'all-or-nothing',
	by: Actor,
	ip = ''
): Promise<ServiceResult<{ imported: number }> | { ok: false; conflict: true; message: string }> {
	const bad = rows.filter((r) => r.errors.length > 0);
	if (mode === 'all-or-nothing' && bad.length > 0) {
		return { ok: false, message: `${bad.length} row(s) have errors, so nothing was imported.` };
	}
	const good = rows.filter((r) => r.errors.length === 0 && r.tool).map((r) => r.tool!);
	if (good.length === 0)
		return { ok: false, message: 'No row is free of errors; nothing was imported.' };
	try {
		// A savepoint: when a parallel import took these T pockets first (the unique index
		// decides, after waiting for it to commit), this import writes nothing and says so.
		await trx.transaction((sp) => sp('tools').insert(good.map((t) => row(machineId, t))));
	} catch (e) {
		if (!isUniqueViolation(e, 'tools_machine_t_active')) throw e;
		return { ok: false, conflict: true, message: IMPORT_CONFLICT };
	}
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'tools.imported',
		target: `${good.length} tools`,
		detail: { skippedRows: bad.map((r) => r.row).join(' ') },
		ip
	});
	return { ok: true, imported: good.length };
}

export async function addFixture(
	trx: Knex.Transaction,
	machineId: number,
	f: { register: string; name: string; description: string },
	by: Actor,
	ip = ''
): Promise<ServiceResult> {
	// Extended work offsets: only as many as the machine is set to have (issue 16).
	const extended = /^G54\.1 P(\d+)$/.exec(f.register);
	if (extended) {
		const m = await trx('machines')
			.where({ id: machineId })
			.first('name', 'extended_work_offsets', 'extended_address');
		if (m && Number(extended[1]) > m.extended_work_offsets)
			return {
				ok: false,
				field: 'register',
				message: `${m.name} is set to have ${m.extended_work_offsets} extended work offsets (${m.extended_address}1…), so ${f.register} is not one of its registers. Change the machine's settings if the control has more.`
			};
	}
	const clash = await trx('fixtures')
		.where({ machine_id: machineId, register: f.register })
		.whereNull('archived_at')
		.first('name');
	if (clash)
		return {
			ok: false,
			field: 'register',
			message: `${f.register} is already used by "${clash.name}" on this machine.`
		};
	await trx('fixtures').insert({
		machine_id: machineId,
		register: f.register,
		name: f.name,
		description: f.description
	});
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'fixture.added',
		target: f.register,
		detail: { name: f.name },
		ip
	});
	return { ok: true };
}

export async function archiveFixture(
	trx: Knex.Transaction,
	machineId: number,
	fixtureId: number,
	by: Actor,
	ip = ''
): Promise<ServiceResult> {
	const [f] = await trx('fixtures')
		.where({ id: fixtureId, machine_id: machineId })
		.whereNull('archived_at')
		.update({ archived_at: trx.fn.now() })
		.returning('register');
	if (!f) return { ok: false, message: 'That fixture is not on this machine.' };
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'fixture.archived',
		target: f.register,
		ip
	});
	return { ok: true };
}
