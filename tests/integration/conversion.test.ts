import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withShop } from '$lib/server/db/tenant';
import { ConversionRefused, convertMachine } from '$lib/server/machines/convert';
import { createMachine } from '$lib/server/machines/service';
import { currentOffsets, getMachine, machineState } from '$lib/server/offsets/machine-state';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';

const knex: Knex = testDb();
afterAll(() => knex.destroy());

let shop: { id: number; schemaName: string };
const by = { id: 0, email: 'lead@example.test' };
const DAY = 86_400_000;

beforeAll(async () => {
	const created = await createShopWithOwner(
		knex,
		{ name: 'Conversion Test', slug: `conv-${uniqueSuffix()}` },
		{ name: 'Lee Lead', email: `lee-${uniqueSuffix()}@example.test`, password: 'convert-me-1' }
	);
	shop = created.shop;
	by.id = created.userId;
});

/**
 * A machine with one fixture and two tools recorded in reference-touch (values invented): the
 * reference was re-established 2 days ago, G54 and H1 measured 5 days ago, H2 yesterday.
 */
async function machineWithOffsets(): Promise<number> {
	const r = await createMachine(
		knex,
		shop,
		{
			name: `VMC ${uniqueSuffix()}`,
			units: 'inch',
			zTravel: 20,
			resolution: 0.0001,
			controlStyle: 'iso',
			convention: 'reference-touch',
			notes: '',
			instrument: '1-2-3 block',
			height: 3,
			location: '',
			note: ''
		},
		by
	);
	if (!r.ok) throw new Error(r.message);
	const id = r.id;
	await withShop(
		shop,
		async (trx) => {
			await trx('reference_surfaces').insert({
				machine_id: id,
				version: 2,
				instrument: '1-2-3 block',
				height: 3,
				established_at: new Date(Date.now() - 2 * DAY)
			});
			const at = (d: number) => new Date(Date.now() - d * DAY);
			await trx('offset_versions').insert([
				{
					machine_id: id,
					register_kind: 'work',
					register: 'G54',
					value: 1.825,
					units: 'inch',
					convention: 'reference-touch',
					reference_version: 1,
					created_at: at(5)
				},
				{
					machine_id: id,
					register_kind: 'tool',
					register: '1',
					value: -14.2733,
					units: 'inch',
					convention: 'reference-touch',
					reference_version: 1,
					created_at: at(5)
				},
				{
					machine_id: id,
					register_kind: 'tool',
					register: '2',
					value: -13.5018,
					units: 'inch',
					convention: 'reference-touch',
					reference_version: 2,
					created_at: at(1)
				}
			]);
		},
		knex
	);
	return id;
}

describe('converting a machine between conventions (real PostgreSQL)', () => {
	it('keeps W + H for every pair, records R on the reference once, and keeps staleness as it was', async () => {
		const id = await machineWithOffsets();
		const plan = await withShop(
			shop,
			async (trx) =>
				convertMachine(
					trx,
					(await getMachine(trx, id))!,
					'gauge-length',
					{ referenceGaugeLineZ: -17.25 },
					by
				),
			knex
		);
		// DESIGN.md §2: gauge-length H = L = (R + L) − R; W = R + h. NISTIR 6556: spindle Z = W + H.
		expect(plan.to.tools['1']).toBe(2.9767);
		expect(plan.to.work.G54).toBe(-15.425);
		expect(plan.pairs.every((p) => p.before === p.after)).toBe(true);
		await withShop(
			shop,
			async (trx) => {
				const machine = (await getMachine(trx, id))!;
				expect(machine.convention).toBe('gauge-length');
				const ref = await trx('reference_surfaces')
					.where({ machine_id: id })
					.orderBy('version', 'desc')
					.first();
				expect(Number(ref.gauge_line_z)).toBe(-17.25);
				const state = await machineState(trx, machine);
				const stale = state.findings.filter((f) => f.kind === 'stale-reference').map((f) => f.key);
				// G54 was measured before the reference was re-established and still is; H2 was not.
				expect(stale.some((k) => k.includes('G54'))).toBe(true);
				expect(stale.some((k) => k.includes('H2'))).toBe(false);
				const offsets = await currentOffsets(trx, id);
				expect(offsets.find((o) => o.register === '1')!.measuredAt).toBe(
					offsets.find((o) => o.register === 'G54')!.measuredAt
				);
			},
			knex
		);
	});

	it('refuses an R that contradicts the recorded one, and the database refuses changing it afterwards', async () => {
		const id = await machineWithOffsets();
		await withShop(
			shop,
			async (trx) =>
				convertMachine(
					trx,
					(await getMachine(trx, id))!,
					'gauge-length',
					{ referenceGaugeLineZ: -17.25 },
					by
				),
			knex
		);
		await withShop(
			shop,
			async (trx) =>
				convertMachine(
					trx,
					(await getMachine(trx, id))!,
					'reference-touch',
					{ referenceGaugeLineZ: -17.25 },
					by
				),
			knex
		);
		await expect(
			withShop(
				shop,
				async (trx) =>
					convertMachine(
						trx,
						(await getMachine(trx, id))!,
						'gauge-length',
						{ referenceGaugeLineZ: -17.3 },
						by
					),
				knex
			)
		).rejects.toBeInstanceOf(ConversionRefused);
		await expect(
			withShop(
				shop,
				(trx) => trx('reference_surfaces').where({ machine_id: id }).update({ gauge_line_z: -1 }),
				knex
			)
		).rejects.toThrow(/append-only/);
		await expect(
			withShop(
				shop,
				(trx) =>
					trx('reference_surfaces')
						.where({ machine_id: id, version: 1 })
						.update({ note: 'edited' }),
				knex
			)
		).rejects.toThrow(/append-only/);
	});

	it('applies over versions saved with microsecond times (as readings saved by the app are)', async () => {
		const id = await machineWithOffsets();
		await withShop(
			shop,
			(trx) =>
				trx('offset_versions').insert({
					machine_id: id,
					register_kind: 'tool',
					register: '2',
					value: -13.5021,
					units: 'inch',
					convention: 'reference-touch',
					reference_version: 2,
					// now() carries microseconds, unlike any JavaScript Date.
					created_at: trx.raw("now() - interval '1 hour' + interval '0.000123 second'")
				}),
			knex
		);
		await withShop(
			shop,
			async (trx) =>
				convertMachine(
					trx,
					(await getMachine(trx, id))!,
					'gauge-length',
					{ referenceGaugeLineZ: -17.25 },
					by
				),
			knex
		);
		const h2 = await withShop(
			shop,
			async (trx) =>
				(await currentOffsets(trx, id)).find((o) => o.kind === 'tool' && o.register === '2')!,
			knex
		);
		// Gauge length: -13.5021 − (-17.2500) = 3.7479 in (DESIGN.md §2).
		expect(h2.value).toBe(3.7479);
	});

	it('returns to the same numbers exactly after a round trip', async () => {
		const id = await machineWithOffsets();
		const before = await withShop(shop, (trx) => currentOffsets(trx, id), knex);
		for (const to of ['gauge-length', 'master-tool', 'reference-touch'] as const) {
			await withShop(
				shop,
				async (trx) => {
					const m = (await getMachine(trx, id))!;
					const [ref] = await trx('reference_surfaces')
						.where({ machine_id: id })
						.orderBy('version', 'desc');
					const masterTouchZ = m.convention === 'master-tool' ? -14.2733 : undefined;
					return convertMachine(
						trx,
						m,
						to,
						{
							referenceGaugeLineZ: ref.gauge_line_z === null ? -17.25 : Number(ref.gauge_line_z),
							masterTouchZ,
							masterTool: '1'
						},
						by
					);
				},
				knex
			);
		}
		const after = await withShop(shop, (trx) => currentOffsets(trx, id), knex);
		const values = (list: typeof before) =>
			Object.fromEntries(list.map((o) => [`${o.kind}:${o.register}`, o.value]));
		expect(values(after)).toEqual(values(before));
	});
});
