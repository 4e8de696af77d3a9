import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { provisionShop } from '$lib/server/shops/provision';
import { testDb, uniqueSuffix } from './db';

/**
 * The fleet board at scale: 200 machines, 4,000 tools and 50,000 readings with their offset
 * versions, seeded in bulk (INSERT … SELECT generate_series). The board's data must come in a
 * small, constant number of SQL statements — counted through Knex's `query` event — whatever
 * the size of the shop. Speed is measured by `npm run bench`, not here.
 */
const knex: Knex = testDb();
let big: ShopRef;
let small: ShopRef;

/** Seeds `machines` machines with 20 tools each and `readings` touch-offs spread over them. */
async function seed(shop: ShopRef, machines: number, readings: number) {
	await withShop(
		shop,
		async (trx) => {
			await trx.raw(
				`insert into machines (name, units, z_travel, resolution)
				select 'Mill ' || lpad(i::text, 3, '0'), 'inch', 20, 0.0001 from generate_series(1, ?) i`,
				[machines]
			);
			await trx.raw(`insert into reference_surfaces (machine_id, version, instrument, height, established_at)
				select id, 1, '1-2-3 block', 3, now() - interval '90 days' from machines`);
			// Every fifth machine had its reference re-set two days ago.
			await trx.raw(`insert into reference_surfaces (machine_id, version, instrument, height, established_at)
				select id, 2, '1-2-3 block', 3, now() - interval '2 days' from machines where id % 5 = 0`);
			await trx.raw(`insert into tools (machine_id, t_number, h_number, description)
				select m.id, t, t, 'tool ' || t from machines m, generate_series(1, 20) t`);
			await trx.raw(`insert into fixtures (machine_id, register, name)
				select id, 'G54', 'Vise' from machines`);
			await trx.raw(`insert into setups (machine_id, name, status, clearance_margin)
				select id, 'Job ' || id, case when id % 3 = 0 then 'planned' else 'on-machine' end, 1
				from machines`);
			await trx.raw(
				`insert into readings (machine_id, kind, tool_id, machine_z, reference_version, taken_at)
				select t.machine_id, 'tool-touch', t.id, -14 - (n % 97) / 10000.0, 1,
					now() - make_interval(days => (n % 60), mins => n % 1440)
				from generate_series(1, ?) n
				join lateral (select id, machine_id from tools where id = 1 + (n % (select count(*) from tools))) t on true`,
				[readings]
			);
			await trx.raw(`insert into offset_versions (machine_id, register_kind, register, value, units,
					convention, reading_id, reference_version, created_at)
				select r.machine_id, 'tool', t.h_number::text, r.machine_z - 3, 'inch', 'reference-touch',
					r.id, 1, r.taken_at
				from readings r join tools t on t.id = r.tool_id`);
			await trx.raw(`insert into findings (key, machine_id, kind, severity, subject_type, subject, message)
				select 'm' || id || '|stale-age|tool:H1', id, 'stale-age', 'caution', 'tool', 'H1', 'old'
				from machines where id % 7 = 0`);
			await trx.raw('analyze');
		},
		knex
	);
}

/** The board of `shop`, and how many SQL statements it took. */
async function countedBoard(shop: ShopRef) {
	let count = 0;
	const onQuery = () => (count += 1);
	knex.on('query', onQuery);
	try {
		const board = await withShop(shop, (trx) => fleetBoard(trx), knex);
		return { board, count };
	} finally {
		knex.off('query', onQuery);
	}
}

beforeAll(async () => {
	big = await provisionShop(knex, { name: 'Scale Test', slug: `scale-${uniqueSuffix()}` });
	small = await provisionShop(knex, { name: 'Scale Small', slug: `scale-s-${uniqueSuffix()}` });
	await seed(big, 200, 50_000);
	await seed(small, 4, 400);
}, 120_000);
afterAll(() => knex.destroy());

describe('fleet board at scale (real PostgreSQL)', () => {
	it('seeded 200 machines, 4,000 tools and 50,000 readings with offset versions', async () => {
		const n = (t: string) =>
			withShop(big, async (trx) => Number((await trx(t).count('* as n'))[0].n), knex);
		expect(await n('machines')).toBe(200);
		expect(await n('tools')).toBe(4000);
		expect(await n('readings')).toBe(50_000);
		expect(await n('offset_versions')).toBe(50_000);
	});

	it('answers in the same small number of queries for 200 machines as for 4', async () => {
		const large = await countedBoard(big);
		const tiny = await countedBoard(small);
		expect(large.board.machines).toHaveLength(200);
		expect(tiny.board.machines).toHaveLength(4);
		// BEGIN, search_path, 4 reads, COMMIT — never one per machine.
		expect(large.count).toBeLessThanOrEqual(8);
		expect(large.count).toBe(tiny.count);
		// The data is right, not just cheap: re-set references show as stale, findings counted.
		const m5 = large.board.machines.find((m) => m.name === 'Mill 005')!;
		expect(m5.health).toBe('stale');
		expect(m5.staleReference).toBe(20);
		const m7 = large.board.machines.find((m) => m.name === 'Mill 007')!;
		expect(m7.findings.caution).toBe(1);
		expect(m7.registers).toBe(20);
		expect(m7.setup?.status).toBe('on-machine');
	});
});
