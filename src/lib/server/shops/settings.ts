/**
 * Shop settings (owner and admin): name, time zone, default units for new machines, the nightly check's
 * hour and the shop's own limits for the offset checks. Stored on `public.shops`; every change is
 * written to the shop's audit log with its old and new value, in the same transaction.
 */
import type { Knex } from 'knex';
import { toUnits, type PolicyInput, type Units } from '$lib/offsets';
import type { Actor } from '../actor';
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
	/** The wear limit in `wearLimitUnits` (the shop's units when shown); null = our default. */
	wearLimit: number | null;
	/** The units the wear limit was shown and typed in (the form sends them back). */
	wearLimitUnits: Units;
}

const COLUMNS = [
	'name',
	'time_zone',
	'default_units',
	'check_hour',
	'check_policy',
	'wear_limit_mm'
] as const;

/** A limit kept in mm, shown in `units` at the usual increment (0.0001 in / 0.001 mm). */
function wearLimitShown(mm: number | null, units: Units): number | null {
	if (mm === null) return null;
	return units === 'mm' ? toUnits(mm, 'mm', 'mm', 0.001) : toUnits(mm, 'mm', 'inch', 0.0001);
}

function toSettings(r: Record<string, unknown>): ShopSettings {
	const policy = (r.check_policy ?? {}) as PolicyInput;
	const units = r.default_units as Units;
	return {
		name: r.name as string,
		timeZone: r.time_zone as string,
		defaultUnits: r.default_units as Units,
		checkHour: Number(r.check_hour),
		jumpTolerance: policy.jumpTolerance ?? null,
		toolMaxAgeDays: policy.toolMaxAgeDays ?? null,
		workMaxAgeDays: policy.workMaxAgeDays ?? null,
		wearLimit: wearLimitShown(wearLimitMmOf(r), units),
		wearLimitUnits: units
	};
}

function wearLimitMmOf(r: Record<string, unknown> | undefined): number | null {
	const v = r?.wear_limit_mm;
	return v === null || v === undefined ? null : Number(v);
}

/**
 * The shop's wear limit in mm (null: our default), for the shop whose schema `trx` is scoped
 * to (withShop), like `shopPolicy`.
 */
export async function shopWearLimitMm(trx: Knex.Transaction): Promise<number | null> {
	const row = await trx('public.shops')
		.where('schema_name', trx.raw('current_schema()'))
		.first('wear_limit_mm');
	return wearLimitMmOf(row);
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

/**
 * What a save takes: the form's values (a blank limit comes as undefined) or settings as read
 * (null for "our default"). Without `wearLimitUnits` the wear limit is in the saved units.
 */
export type SettingsToSave = Pick<
	ShopSettings,
	'name' | 'timeZone' | 'defaultUnits' | 'checkHour'
> & {
	jumpTolerance?: number | null;
	toolMaxAgeDays?: number | null;
	workMaxAgeDays?: number | null;
	wearLimit?: number | null;
	wearLimitUnits?: Units;
};

/**
 * Saves the settings and audits each changed field ({ field, from, to }). Returns the names of
 * the fields that changed (empty when nothing did, and then nothing is written).
 */
export async function saveSettings(
	knex: Knex,
	shop: ShopRef,
	raw: SettingsToSave,
	by: Actor,
	ip = ''
): Promise<{ changed: string[]; settings: ShopSettings }> {
	return knex.transaction(async (trx) => {
		const row = await trx('public.shops').where({ id: shop.id }).forUpdate().first(COLUMNS);
		const before = toSettings(row);
		const input: ShopSettings = {
			name: raw.name,
			timeZone: raw.timeZone,
			defaultUnits: raw.defaultUnits,
			checkHour: raw.checkHour,
			jumpTolerance: raw.jumpTolerance ?? null,
			toolMaxAgeDays: raw.toolMaxAgeDays ?? null,
			workMaxAgeDays: raw.workMaxAgeDays ?? null,
			wearLimit: raw.wearLimit ?? null,
			wearLimitUnits: raw.wearLimitUnits ?? before.wearLimitUnits
		};
		const beforeMm = wearLimitMmOf(row);
		// The wear limit is kept in mm. A value shown and sent back unchanged keeps the stored
		// one exactly (0.25 mm shown as 0.0098 in must not become 0.24892 mm); a new value is
		// converted exactly from the units it was typed in (1 in = 25.4 mm, NIST SP 811).
		const wearMm =
			input.wearLimit === null
				? null
				: input.wearLimit === before.wearLimit && input.wearLimitUnits === before.wearLimitUnits
					? beforeMm
					: input.wearLimitUnits === 'mm'
						? input.wearLimit
						: toUnits(input.wearLimit, 'inch', 'mm');
		const after: ShopSettings = {
			...input,
			wearLimit: wearLimitShown(wearMm, input.defaultUnits),
			wearLimitUnits: input.defaultUnits
		};
		const fields = (Object.keys(after) as (keyof ShopSettings)[]).filter(
			(k) => k !== 'wearLimit' && k !== 'wearLimitUnits'
		);
		const changed: string[] = fields.filter((k) => before[k] !== after[k]);
		if (wearMm !== beforeMm) changed.push('wearLimit');
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
				check_policy: JSON.stringify(policy),
				wear_limit_mm: wearMm
			});
		await enterShop(trx, shop.schemaName);
		for (const field of changed) {
			// The wear limit is audited in mm, the unit it is kept in (null: our default).
			const detail =
				field === 'wearLimit'
					? { field, from: beforeMm, to: wearMm, units: 'mm' }
					: {
							field,
							from: before[field as keyof ShopSettings],
							to: after[field as keyof ShopSettings]
						};
			await audit(trx, {
				actorUserId: by.id,
				actorEmail: by.email,
				action: 'settings.changed',
				target: field,
				detail,
				ip
			});
		}
		return { changed, settings: after };
	});
}
