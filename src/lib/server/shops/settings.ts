/**
 * Shop settings (issue 18): name, time zone, default units for new machines, the nightly check's
 * hour and the shop's own limits for the offset checks. Stored on `public.shops`; every change is
 * written to the shop's audit log with its old and new value, in the same transaction.
 */
import type { Knex } from 'knex';
import type { PolicyInput, Units } from '$lib/offsets';
import type { ShopSettingsInput } from '$lib/schemas/settings';
import { audit } from '../audit';
import { enterShop } from '../db/roles';
import type { ShopRef } from '../db/tenant';

export interface ShopSettings {
	name: string;
	timeZone: string;
	defaultUnits: Units;
	checkHour: number;
	/** In `defaultUnits`; null = our default. */
	jumpTolerance: number | null;
	toolMaxAgeDays: number | null;
	workMaxAgeDays: number | null;
}

const COLUMNS = ['name', 'time_zone', 'default_units', 'check_hour', 'check_policy'] as const;

function toSettings(r: Record<string, unknown>): ShopSettings {
	const policy = (r.check_policy ?? {}) as PolicyInput;
	return {
		name: r.name as string,
		timeZone: r.time_zone as string,
		defaultUnits: r.default_units as Units,
		checkHour: Number(r.check_hour),
		jumpTolerance: policy.jumpTolerance ?? null,
		toolMaxAgeDays: policy.toolMaxAgeDays ?? null,
		workMaxAgeDays: policy.workMaxAgeDays ?? null
	};
}

export async function readSettings(knex: Knex | Knex.Transaction, shopId: number) {
	const row = await knex('public.shops').where({ id: shopId }).first(COLUMNS);
	if (!row) throw new Error(`no shop ${shopId}`);
	return toSettings(row);
}

/**
 * The shop's check limits as the engine takes them (PolicyInput, lengths with their units).
 * `trx` is a shop transaction (withShop): the shop is found by the schema it is scoped to, so
 * callers deep in a check need not be handed the shop's id.
 */
export async function shopPolicy(trx: Knex.Transaction): Promise<PolicyInput> {
	const row = await trx('public.shops')
		.where('schema_name', trx.raw('current_schema()'))
		.first('check_policy');
	return (row?.check_policy ?? {}) as PolicyInput;
}

/**
 * The age limits the fleet board counts with, read before the board's own queries (which read
 * only tables that announce their changes; a settings change reaches a cached board within its
 * 5 s life).
 */
export async function boardAges(
	knex: Knex | Knex.Transaction,
	shopId: number
): Promise<{ toolDays?: number; workDays?: number }> {
	const row = await knex('public.shops').where({ id: shopId }).first('check_policy');
	const p = (row?.check_policy ?? {}) as PolicyInput;
	return { toolDays: p.toolMaxAgeDays, workDays: p.workMaxAgeDays };
}

/** The units a new machine starts with in this shop. */
export async function defaultUnits(knex: Knex | Knex.Transaction, shopId: number): Promise<Units> {
	const row = await knex('public.shops').where({ id: shopId }).first('default_units');
	return (row?.default_units ?? 'inch') as Units;
}

export interface Actor {
	id: number;
	email: string;
}

/**
 * Saves the settings and audits each changed field ({ field, from, to }). Returns the names of
 * the fields that changed (empty when nothing did, and then nothing is written).
 */
export async function saveSettings(
	knex: Knex,
	shop: ShopRef,
	input: ShopSettingsInput,
	by: Actor,
	ip = ''
): Promise<{ changed: string[]; settings: ShopSettings }> {
	return knex.transaction(async (trx) => {
		const row = await trx('public.shops').where({ id: shop.id }).forUpdate().first(COLUMNS);
		const before = toSettings(row);
		const after: ShopSettings = { ...input };
		const changed = (Object.keys(after) as (keyof ShopSettings)[]).filter(
			(k) => before[k] !== after[k]
		);
		if (changed.length === 0) return { changed, settings: before };
		const policy: PolicyInput = { units: after.defaultUnits };
		if (after.jumpTolerance !== null) policy.jumpTolerance = after.jumpTolerance;
		if (after.toolMaxAgeDays !== null) policy.toolMaxAgeDays = after.toolMaxAgeDays;
		if (after.workMaxAgeDays !== null) policy.workMaxAgeDays = after.workMaxAgeDays;
		await trx('public.shops')
			.where({ id: shop.id })
			.update({
				name: after.name,
				time_zone: after.timeZone,
				default_units: after.defaultUnits,
				check_hour: after.checkHour,
				check_policy: JSON.stringify(policy)
			});
		await enterShop(trx, shop.schemaName);
		for (const field of changed) {
			await audit(trx, {
				actorUserId: by.id,
				actorEmail: by.email,
				action: 'settings.changed',
				target: field,
				detail: { field, from: before[field], to: after[field] },
				ip
			});
		}
		return { changed, settings: after };
	});
}
