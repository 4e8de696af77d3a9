import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withShop } from '$lib/server/db/tenant';
import { createShopWithOwner } from '$lib/server/shops/create';
import { addSetupPhoto, PHOTOS_PER_SETUP } from '$lib/server/setups/photos';
import { createSetup } from '$lib/server/setups/write';
import { parseToolCsv } from '$lib/server/tools/csv';
import {
	activeHNumbers,
	activeTNumbers,
	IMPORT_CONFLICT,
	importTools
} from '$lib/server/tools/service';
import { testDb, uniqueSuffix } from './db';
import { insertTwoFixtureMill } from './two-fixture-mill';

/** Hardening: limits hold under parallel requests (each on its own connection, as in the app). */
const knex: Knex = testDb();
let uploads: string;
let shop: { id: number; schemaName: string; slug: string };
let actor: { id: number; email: string };
let setupId: number;
let machineId: number;
const inShop = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shop, fn, knex);

beforeAll(async () => {
	uploads = await mkdtemp(join(tmpdir(), 'dk-concurrency-'));
	process.env.UPLOADS_DIR = uploads;
	const email = `conc-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: 'Concurrency Shop', slug: `conc-${uniqueSuffix()}` },
		{ name: 'Cy Current', email, password: 'correct-horse-1' }
	);
	shop = created.shop;
	actor = { id: created.userId, email };
	setupId = await inShop(async (trx) => {
		const m = await insertTwoFixtureMill(trx, []);
		machineId = m.id;
		const r = await createSetup(
			trx,
			{
				machineId: m.id,
				name: 'Photo limit job',
				job: '',
				clearanceMargin: 0.5,
				fixtures: [{ fixtureId: m.fixtures.G54, obstacleHeight: 1 }],
				toolIds: [],
				ops: []
			},
			actor
		);
		if (!r.ok) throw new Error('setup not created');
		return r.value;
	});
});

afterAll(async () => {
	await knex.destroy();
	await rm(uploads, { recursive: true, force: true });
});

const png = () =>
	new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48]);

describe('photo limit under parallel uploads', () => {
	it('6 parallel uploads with 2 slots free store exactly 2', async () => {
		await inShop(async (trx) => {
			for (let i = 0; i < PHOTOS_PER_SETUP - 2; i++)
				await trx('setup_photos').insert({
					setup_id: setupId,
					storage_key: `${shop.schemaName}/setups/${setupId}/pre-${i}.png`,
					original_name: `pre-${i}.png`,
					content_type: 'image/png',
					byte_size: 14,
					caption: '',
					uploaded_by: actor.id
				});
		});
		const results = await Promise.all(
			Array.from({ length: 6 }, (_, i) =>
				inShop((trx) =>
					addSetupPhoto(
						trx,
						shop.schemaName,
						setupId,
						new File([png()], `p${i}.png`, { type: 'image/png' }),
						'',
						actor
					)
				)
			)
		);
		expect(results.filter((r) => r.ok)).toHaveLength(2);
		for (const r of results.filter((x) => !x.ok))
			expect(!r.ok && r.message).toMatch(/keeps 24 photos at most/);
		const n = await inShop(async (trx) =>
			Number((await trx('setup_photos').where({ setup_id: setupId }).count({ n: '*' }))[0].n)
		);
		expect(n).toBe(PHOTOS_PER_SETUP);
	});
});

describe('parallel CSV imports of the same tools', () => {
	it('one imports; the others answer a conflict in words and write nothing', async () => {
		const csv = ['t,h,description', '41,41,drill', '42,42,tap', '43,43,reamer'].join('\n');
		const results = await Promise.all(
			Array.from({ length: 3 }, () =>
				inShop(async (trx) => {
					const parsed = parseToolCsv(
						csv,
						await activeTNumbers(trx, machineId),
						await activeHNumbers(trx, machineId)
					);
					if (!parsed.ok) throw new Error(parsed.message);
					return importTools(trx, machineId, parsed.rows, 'all-or-nothing', actor);
				})
			)
		);
		expect(results.filter((r) => r.ok)).toHaveLength(1);
		// A late import either meets the other in flight (the conflict answer) or starts after it
		// committed and finds the pockets taken (row errors); both say why and write nothing.
		for (const r of results.filter((x) => !x.ok)) {
			if ('conflict' in r && r.conflict)
				expect(r).toEqual({ ok: false, conflict: true, message: IMPORT_CONFLICT });
			else expect(r.message).toMatch(/row\(s\) have errors, so nothing was imported/);
		}
		const tools = await inShop((trx) =>
			trx('tools')
				.where({ machine_id: machineId })
				.whereIn('t_number', [41, 42, 43])
				.count({ n: '*' })
		);
		expect(Number(tools[0].n)).toBe(3);
	});
});
