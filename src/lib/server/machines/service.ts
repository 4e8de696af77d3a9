import type { Knex } from 'knex';
import type { z } from 'zod';
import type { machineFormSchema, newMachineSchema } from '$lib/schemas/machine';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { assertCanAddMachine } from '../billing/gate';
import { inShop, type ShopRef } from '../db/tenant';

/** The extended work offset settings may be left out (0, addressed as G54.1 P). */
type ExtendedOptional<T> = Omit<T, 'extendedWorkOffsets' | 'extendedAddress'> &
	Partial<Pick<z.infer<typeof machineFormSchema>, 'extendedWorkOffsets' | 'extendedAddress'>>;
type NewMachine = ExtendedOptional<z.infer<typeof newMachineSchema>>;
type MachineEdit = ExtendedOptional<z.infer<typeof machineFormSchema>>;
export type ServiceResult<T = object> =
	({ ok: true } & T) | { ok: false; field?: string; message: string };

const nameTaken = (e: unknown) =>
	(e as { code?: string; constraint?: string }).code === '23505' &&
	/machines_name_unique/.test(String((e as { constraint?: string }).constraint));

/**
 * Adds a machine with its first reference, after the plan's machine limit (checked inside the
 * same transaction, with the shop's billing row locked) — the limit is a server rule, not a
 * hidden button.
 */
export async function createMachine(
	knex: Knex,
	shop: ShopRef,
	input: NewMachine,
	by: Actor,
	ip = ''
): Promise<ServiceResult<{ id: number }>> {
	try {
		return await knex.transaction(async (trx) => {
			const gate = await assertCanAddMachine(trx, shop);
			if (!gate.ok) return { ok: false, message: gate.message };
			// A shop on another database server adds the machine there (db/tenant.ts inShop).
			const id = await inShop(trx, shop, async (trx) => {
				const [row] = await trx('machines')
					.insert({
						name: input.name,
						units: input.units,
						z_travel: input.zTravel,
						resolution: input.resolution,
						control_style: input.controlStyle,
						extended_work_offsets: input.extendedWorkOffsets ?? 0,
						extended_address: input.extendedAddress ?? 'G54.1 P',
						convention: input.convention,
						notes: input.notes
					})
					.returning('id');
				const id = Number(row.id);
				await trx('reference_surfaces').insert({
					machine_id: id,
					version: 1,
					instrument: input.instrument,
					height: input.height,
					location: input.location,
					gauge_line_z: input.gaugeLineZ ?? null,
					established_by: by.id,
					note: input.note
				});
				await audit(trx, {
					actorUserId: by.id,
					actorEmail: by.email,
					action: 'machine.created',
					target: input.name,
					detail: { units: input.units, zTravel: input.zTravel, convention: input.convention },
					ip
				});
				return id;
			});
			return { ok: true as const, id };
		});
	} catch (e) {
		if (nameTaken(e))
			return {
				ok: false,
				field: 'name',
				message: `A machine named "${input.name}" already exists in this shop.`
			};
		throw e;
	}
}

/**
 * Edits a machine's description. Units and convention hold the meaning of every recorded
 * number, so units cannot change once readings exist, and the convention changes only through
 * the conversion page (which converts the table).
 */
export async function updateMachine(
	trx: Knex.Transaction,
	machineId: number,
	input: Omit<MachineEdit, 'convention'>,
	by: Actor,
	ip = ''
): Promise<ServiceResult> {
	const current = await trx('machines').where({ id: machineId }).first('units', 'name');
	if (input.units !== current.units) {
		const [{ n }] = await trx('readings').where({ machine_id: machineId }).count({ n: '*' });
		if (Number(n) > 0) {
			return {
				ok: false,
				field: 'units',
				message: `Units cannot change from ${current.units} to ${input.units}: this machine already has ${n} readings recorded in ${current.units}. Add a new machine instead.`
			};
		}
	}
	try {
		await trx.raw('savepoint machine_update');
		await trx('machines')
			.where({ id: machineId })
			.update({
				name: input.name,
				units: input.units,
				z_travel: input.zTravel,
				resolution: input.resolution,
				control_style: input.controlStyle,
				...(input.extendedWorkOffsets !== undefined
					? { extended_work_offsets: input.extendedWorkOffsets }
					: {}),
				...(input.extendedAddress !== undefined ? { extended_address: input.extendedAddress } : {}),
				notes: input.notes
			});
		await trx.raw('release savepoint machine_update');
	} catch (e) {
		await trx.raw('rollback to savepoint machine_update');
		if (nameTaken(e))
			return {
				ok: false,
				field: 'name',
				message: `A machine named "${input.name}" already exists in this shop.`
			};
		throw e;
	}
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'machine.updated',
		target: input.name,
		detail: { from: current.name },
		ip
	});
	return { ok: true };
}
