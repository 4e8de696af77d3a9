import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	edgeReadingSchema,
	partMeasurementSchema,
	toolRegisterSchema
} from '$lib/schemas/components';
import { shopSettingsSchema } from '$lib/schemas/settings';
import { recordEdgeReading } from '$lib/server/components/edge';
import { programComponents } from '$lib/server/components/load-program';
import {
	previewPartWear,
	recordToolRegister,
	toolRegisters
} from '$lib/server/components/tool-registers';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { readSettings, saveSettings } from '$lib/server/shops/settings';
import { testDb } from './db';
import { newTestMill } from './test-mill';

/**
 * Issue 20, the rest: the shop's wear limit is a setting (kept in mm, shown in the shop's
 * units, audited) that every wear judgement uses; a component saved over a Stop leaves an
 * override finding that a later clean value of the same component resolves (findings follow
 * the data, as for Z).
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string; name: string };
let machineId: number;

const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const overrides = () =>
	withShop(
		shop,
		(trx) => trx('findings').where({ kind: 'override' }).orderBy('id').select('*'),
		knex
	) as Promise<Record<string, never>[]>;
const wearMm = async () =>
	(await knex('public.shops').where({ id: shop.id }).first('wear_limit_mm')).wear_limit_mm;
const register = (over: Record<string, unknown>) =>
	toolRegisterSchema.parse({ h: '3', component: 'length-wear', ...over });

beforeAll(async () => {
	const made = await newTestMill(knex, {
		slug: 'wearlimit',
		person: 'Wanda Wear',
		shopName: 'Wear Limit Test',
		machineName: 'Wear Mill',
		referenceDaysAgo: 1
	});
	({ shop, machineId } = made);
	actor = { ...made.actor, name: 'Wanda Wear' };
	await withShop(
		shop,
		async (trx) => {
			await trx('tools').insert({
				machine_id: machineId,
				t_number: 3,
				h_number: 3,
				description: 'end mill'
			});
		},
		knex
	);
});
afterAll(() => knex.destroy());

describe("the shop's wear limit", () => {
	it('refuses a bad limit with field, value and why, and changes nothing', async () => {
		const before = await readSettings(knex, shop.id);
		for (const [text, why] of [
			['0,005', /Wear limit/],
			['0.005in', /Wear limit/],
			['0.5', /Wear limit 0.5 in is out of range: use 0.0001 to 0.1 in/],
			['0', /Wear limit must be greater than 0 \(got 0\)/],
			['0.00005', /Wear limit 0.00005 in is out of range/]
		] as const) {
			const r = shopSettingsSchema.safeParse({
				...before,
				wearLimit: text,
				checkHour: String(before.checkHour)
			});
			expect(r.success, text).toBe(false);
			const issue = r.error!.issues.find((i) => i.path[0] === 'wearLimit');
			expect(issue?.message, text).toMatch(why);
		}
		expect(await wearMm()).toBeNull();
		// The database refuses an out-of-range limit too (a last guard behind the form).
		await expect(
			knex('public.shops').where({ id: shop.id }).update({ wear_limit_mm: 5 })
		).rejects.toThrow(/shops_wear_limit_mm_range/);
	});

	it('keeps the limit in mm, shows it in the shop units, audits it, and the judgements use it', async () => {
		// Default first: -0.0080 in of length wear stands (0.0100 in, our default, shop policy).
		await inShop((trx, m) => recordToolRegister(trx, m, register({ value: '-0.0080' }), actor));
		expect((await inShop((trx, m) => toolRegisters(trx, m))).wearLimit).toBe(0.01);

		const before = await readSettings(knex, shop.id);
		expect(before).toMatchObject({ wearLimit: null, wearLimitUnits: 'inch' });
		const parsed = shopSettingsSchema.parse({
			...before,
			checkHour: String(before.checkHour),
			wearLimit: '0.0050'
		});
		const r = await saveSettings(knex, shop, parsed, actor);
		expect(r.changed).toEqual(['wearLimit']);
		// 0.0050 in = 0.127 mm exactly (NIST SP 811).
		expect(Number(await wearMm())).toBe(0.127);
		expect(await readSettings(knex, shop.id)).toMatchObject({
			wearLimit: 0.005,
			wearLimitUnits: 'inch'
		});
		const audit = await withShop(
			shop,
			(trx) => trx('audit_log').where({ action: 'settings.changed', target: 'wearLimit' }).first(),
			knex
		);
		expect(audit.detail).toEqual({ field: 'wearLimit', from: null, to: 0.127, units: 'mm' });

		// Every judgement now uses 0.0050 in: the page's table, a new value, a measured part,
		// and the load program's gate.
		const regs = await inShop((trx, m) => toolRegisters(trx, m));
		expect(regs.wearLimit).toBe(0.005);
		expect(regs.tools.find((t) => t.h === '3')!.findings.map((f) => f.kind)).toEqual([
			'wear-limit'
		]);
		await expect(
			inShop((trx, m) => recordToolRegister(trx, m, register({ value: '-0.0060' }), actor))
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'overrideReason' })] });
		const p = await inShop((trx, m) =>
			previewPartWear(
				trx,
				m,
				partMeasurementSchema.parse({
					h: '3',
					feature: 'depth',
					nominal: '0.5000',
					measured: '0.4990'
				})
			)
		);
		expect(p.newWear).toBe(-0.009);
		expect(p.beyondLimit).toBe(true);
		expect(p.findings.map((f) => f.kind)).toEqual(['wear-limit']);
		const comps = await inShop((trx, m) => programComponents(trx, m));
		expect(comps.flagged).toEqual([
			expect.objectContaining({ register: '3', component: 'length-wear' })
		]);

		// The shop switches to mm without touching the limit: it stays 0.127 mm exactly.
		const again = await readSettings(knex, shop.id);
		const r2 = await saveSettings(
			knex,
			shop,
			shopSettingsSchema.parse({
				...again,
				checkHour: String(again.checkHour),
				wearLimit: String(again.wearLimit),
				defaultUnits: 'mm'
			}),
			actor
		);
		expect(r2.changed).toEqual(['defaultUnits']);
		expect(Number(await wearMm())).toBe(0.127);
		expect(await readSettings(knex, shop.id)).toMatchObject({
			wearLimit: 0.127,
			wearLimitUnits: 'mm'
		});
		// Emptied: back to our default.
		const r3 = await saveSettings(
			knex,
			shop,
			{ ...(await readSettings(knex, shop.id)), wearLimit: null },
			actor
		);
		expect(r3.changed).toEqual(['wearLimit']);
		expect(await wearMm()).toBeNull();
		expect((await inShop((trx, m) => toolRegisters(trx, m))).wearLimit).toBe(0.01);
	});
});

describe('component override findings follow the data', () => {
	it('a wear saved over a Stop stays open until a clean value of that register replaces it', async () => {
		await inShop((trx, m) =>
			recordToolRegister(
				trx,
				m,
				register({
					value: '-0.0150',
					override: true,
					overrideReason: 'Worn cutter, one more part'
				}),
				actor
			)
		);
		const [o] = (await overrides()).filter((f) => f.subject === 'H3 length wear');
		expect(o).toMatchObject({ status: 'open', severity: 'stop' });
		// A clean value of another register leaves it open.
		await inShop((trx, m) =>
			recordToolRegister(trx, m, register({ component: 'radius-wear', value: '0.0010' }), actor)
		);
		expect((await overrides()).find((f) => f.id === o.id)!.status).toBe('open');
		// A clean value of this register resolves it, saying by what.
		await inShop((trx, m) => recordToolRegister(trx, m, register({ value: '-0.0020' }), actor));
		const done = (await overrides()).find((f) => f.id === o.id)!;
		expect(done.status).toBe('resolved');
		expect(done.comment).toMatch(/^resolved by the new value of H3 length wear \(version #\d+\)$/);
		// Saved over a Stop again: a new finding, linked to the resolved one.
		await inShop((trx, m) =>
			recordToolRegister(
				trx,
				m,
				register({ value: '0.0200', override: true, overrideReason: 'Again, on purpose' }),
				actor
			)
		);
		const now = (await overrides()).filter((f) => f.subject === 'H3 length wear');
		expect(now.map((f) => f.status)).toEqual(['resolved', 'open']);
		expect(Number(now[1].previous_finding_id)).toBe(Number(o.id));
	});

	it('an edge reading saved over a Stop is resolved by a later clean edge reading', async () => {
		const edge = (over: Record<string, unknown>) =>
			edgeReadingSchema.parse({ register: 'G54', axis: 'X', probeDiameter: '0.2000', ...over });
		await inShop((trx, m) =>
			recordEdgeReading(trx, m, edge({ firstCoordinate: '-12.4000', firstSide: 'minus' }), actor)
		);
		// Touched from the other side, a probe diameter away: Stop (common shop practice).
		await inShop((trx, m) =>
			recordEdgeReading(
				trx,
				m,
				edge({
					firstCoordinate: '-12.4000',
					firstSide: 'plus',
					override: true,
					overrideReason: 'Checking the override'
				}),
				actor
			)
		);
		const [o] = (await overrides()).filter((f) => f.subject === 'G54 X');
		expect(o.status).toBe('open');
		await inShop((trx, m) =>
			recordEdgeReading(trx, m, edge({ firstCoordinate: '-12.4000', firstSide: 'plus' }), actor)
		);
		const done = (await overrides()).find((f) => f.id === o.id)!;
		expect(done.status).toBe('resolved');
		expect(done.comment).toContain('the new value of G54 X');
	});
});
