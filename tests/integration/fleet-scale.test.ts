import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { provisionShop } from '$lib/server/shops/provision';
import { SCALE, seedScaleShop } from '../../bench/fleet-data';
import { testDb, uniqueSuffix } from './db';

/**
 * The fleet board at scale: 200 machines, 4,000 tools and 50,000 readings with their offset
 * versions, seeded in bulk by bench/fleet-data.ts (shared with `npm run bench`). The board's
 * data must come in a small, constant number of SQL statements — counted through Knex's
 * `query` event — whatever the size of the shop. Speed is measured by `npm run bench`, not here.
 */
const knex: Knex = testDb();
let big: ShopRef;
let small: ShopRef;

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
	await seedScaleShop(knex, big, SCALE.machines, SCALE.readings);
	await seedScaleShop(knex, small, 4, 400);
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
		// BEGIN, entering the shop, the reads (machines, findings, overrides, read-back state,
		// last check), COMMIT — a fixed number, never one per machine.
		expect(large.count).toBeLessThanOrEqual(9);
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
