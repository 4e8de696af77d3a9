import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { currentOffsets } from '$lib/server/offsets/machine-state';
import { provisionShop } from '$lib/server/shops/provision';
import { seedScaleShop } from '../fixtures/fleet-data';
import { testDb, uniqueSuffix } from './db';

/**
 * `current_offsets` and `machines.last_reading_at` are kept by triggers on the append-only
 * offset_versions and readings (migration 20261203090000). Whatever is inserted, they must
 * equal what the full scans they replace give: a DISTINCT ON over offset_versions (newest
 * created_at, then highest id) and max(readings.taken_at) per machine.
 */
const knex: Knex = testDb();
let shop: ShopRef;
afterAll(() => knex.destroy());

beforeAll(async () => {
	shop = await provisionShop(knex, { name: 'Current Offsets', slug: `cur-${uniqueSuffix()}` });
	// Bulk inserts (one statement of many rows, several per register, random order of times).
	await seedScaleShop(knex, shop, 6, 900);
}, 60_000);

const KEY = 'machine_id, register_kind, register';
const COLUMNS = `${KEY}, offset_version_id, value, created_at, reference_version, reading_id`;

/** Asserts the trigger-kept tables equal the scans; returns the register count. */
async function expectInLine(): Promise<number> {
	return withShop(
		shop,
		async (trx) => {
			const kept = await trx.raw(`select ${COLUMNS} from current_offsets order by ${KEY}`);
			const scanned = await trx.raw(`select ${COLUMNS} from (
				select distinct on (${KEY}) ${KEY}, id as offset_version_id, value, created_at,
					reference_version, reading_id
				from offset_versions order by ${KEY}, created_at desc, id desc) s
				order by ${KEY}`);
			expect(kept.rows).toEqual(scanned.rows);
			const last = await trx.raw(`select m.id, m.last_reading_at,
					(select max(taken_at) from readings r where r.machine_id = m.id) as newest
				from machines m order by m.id`);
			for (const m of last.rows) expect(m.last_reading_at).toEqual(m.newest);
			return kept.rows.length;
		},
		knex
	);
}

/** Inserts a reading and its tool offset version (as recording a touch-off does). */
async function record(
	trx: Knex.Transaction,
	machineId: number,
	h: string,
	value: number,
	takenAt: Date,
	extra: Record<string, unknown> = {}
): Promise<{ readingId: number; versionId: number }> {
	const [r] = await trx('readings')
		.insert({
			machine_id: machineId,
			kind: 'tool-touch',
			machine_z: value + 3,
			reference_version: 1,
			taken_at: takenAt,
			...extra
		})
		.returning('id');
	const [o] = await trx('offset_versions')
		.insert({
			machine_id: machineId,
			register_kind: 'tool',
			register: h,
			value,
			units: 'inch',
			convention: 'reference-touch',
			reading_id: r.id,
			reference_version: 1,
			created_at: takenAt
		})
		.returning('id');
	return { readingId: Number(r.id), versionId: Number(o.id) };
}

describe('trigger-kept current offsets and last reading (real PostgreSQL)', () => {
	it('match the scans after bulk inserts', async () => {
		expect(await expectInLine()).toBe(6 * 20);
	});

	it('keep the newest through new readings, older late inserts, corrections and conversions', async () => {
		const machineId = await withShop(
			shop,
			async (trx) => Number((await trx('machines').orderBy('id').first('id')).id),
			knex
		);
		const now = Date.now();
		// A new reading now, then one inserted later but taken earlier: the first stays current.
		const first = await withShop(
			shop,
			(trx) => record(trx, machineId, '1', -17.1, new Date(now)),
			knex
		);
		await withShop(shop, (trx) => record(trx, machineId, '1', -17.9, new Date(now - 3600e3)), knex);
		await expectInLine();
		let current = await withShop(shop, (trx) => currentOffsets(trx, machineId), knex);
		expect(current.find((o) => o.kind === 'tool' && o.register === '1')).toMatchObject({
			value: -17.1,
			offsetVersionId: first.versionId
		});

		// A correction: a new reading pointing at the wrong one, with its own offset version.
		const fix = await withShop(
			shop,
			(trx) =>
				record(trx, machineId, '1', -17.2, new Date(now + 1000), {
					corrects_reading_id: first.readingId,
					reason: 'wrong block'
				}),
			knex
		);
		await expectInLine();

		// A conversion-style insert: same created_at as the source (to the microsecond), higher
		// id — it must win. Several registers in one statement, as convertMachine inserts them.
		await withShop(
			shop,
			(trx) =>
				trx.raw(
					`insert into offset_versions (machine_id, register_kind, register, value, units,
						convention, reading_id, reference_version, created_at)
					select o.machine_id, o.register_kind, o.register, o.value + 5, o.units, 'master-tool',
						o.reading_id, o.reference_version, o.created_at
					from current_offsets c join offset_versions o on o.id = c.offset_version_id
					where c.machine_id = :machineId`,
					{ machineId }
				),
			knex
		);
		expect(await expectInLine()).toBe(6 * 20);
		current = await withShop(shop, (trx) => currentOffsets(trx, machineId), knex);
		const h1 = current.find((o) => o.kind === 'tool' && o.register === '1')!;
		expect(h1.value).toBeCloseTo(-12.2, 4);
		expect(h1.offsetVersionId).toBeGreaterThan(fix.versionId);
		expect(h1.readingId).toBe(fix.readingId);

		// A new work register appears with its first version.
		await withShop(
			shop,
			(trx) =>
				trx('offset_versions').insert({
					machine_id: machineId,
					register_kind: 'work',
					register: 'G54',
					value: -10.5,
					units: 'inch',
					convention: 'master-tool',
					reference_version: 1
				}),
			knex
		);
		expect(await expectInLine()).toBe(6 * 20 + 1);
	});

	it('leaves offset_versions and readings append-only', async () => {
		await expect(
			withShop(shop, (trx) => trx('offset_versions').update({ value: 0 }).where('id', 1), knex)
		).rejects.toThrow(/append-only/);
		await expect(
			withShop(shop, (trx) => trx('readings').delete().where('id', 1), knex)
		).rejects.toThrow(/append-only/);
	});
});
