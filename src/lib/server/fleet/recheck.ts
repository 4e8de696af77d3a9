import type { Knex } from 'knex';
import { machineState, type MachineRecord } from '../offsets/machine-state';
import { storeFindings } from './check';
import { readbackFindings, DEFAULT_READBACK_HOURS } from '../readbacks/findings';
import { componentFindings } from '../components/findings';

/** The read-back hours of the shop whose schema this transaction is in. */
async function shopReadbackHours(trx: Knex.Transaction): Promise<number> {
	const row = await trx('public.shops')
		.whereRaw('schema_name = current_schema()')
		.first('readback_hours');
	return row?.readback_hours ?? DEFAULT_READBACK_HOURS;
}

/**
 * Findings follow the data: after a write that changes a machine's offsets, readings or
 * reference, its checks run again in the same transaction (the engine is pure and cheap), so a
 * fixed finding is resolved at once ("resolved by the new reading of H3 at 10:41") and a new
 * one appears at once. The nightly check stays for staleness by age.
 * @param cause what the write was, for the resolution note: "the new reading of H3"
 */
export async function recheckMachine(
	trx: Knex.Transaction,
	machine: MachineRecord,
	cause: { what: string; by?: number | null; timeZone?: string },
	now = new Date()
) {
	const state = await machineState(trx, machine, now);
	// Read-back findings are part of the machine's checks: a new reading changes what the
	// control should hold, so a mismatch of the old value goes and an unverified one may come.
	const readback = await readbackFindings(trx, machine, now, await shopReadbackHours(trx));
	const names = new Map<string, string>();
	for (const s of state.checkInput.setups ?? []) if (s.id && s.name) names.set(s.id, s.name);
	const at = now.toLocaleTimeString('en-GB', {
		hour: '2-digit',
		minute: '2-digit',
		timeZone: cause.timeZone ?? 'UTC'
	});
	const zone = cause.timeZone ? '' : ' UTC';
	return storeFindings(
		trx,
		machine.id,
		[...state.findings, ...readback, ...(await componentFindings(trx, machine, now))],
		now,
		{ comment: `resolved by ${cause.what} at ${at}${zone}`, by: cause.by ?? null },
		names
	);
}

/**
 * Resolves the open override finding of one register (a new reading saved without override
 * replaces the overridden value).
 */
export async function resolveOverride(
	trx: Knex.Transaction,
	machineId: number,
	subjectKey: string,
	cause: { what: string; by?: number | null },
	now = new Date()
): Promise<number> {
	return trx('findings')
		.where({ machine_id: machineId, kind: 'override' })
		.where('key', `m${machineId}|override|${subjectKey}`)
		.whereNot('status', 'resolved')
		.update({
			status: 'resolved',
			resolved_by: cause.by ?? null,
			resolved_at: now,
			comment: `resolved by ${cause.what}`
		});
}
