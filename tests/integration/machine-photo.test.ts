import { access, mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { withShop } from '$lib/server/db/tenant';
import { readMachinePhoto, setMachinePhoto } from '$lib/server/machines/photo';
import type { Actor } from '$lib/server/actor';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';
import { setEnv } from './env';

const knex: Knex = testDb();
let uploads: string;
let shop: { id: number; schemaName: string; slug: string };
let actor: Actor;
let machineId: number;

const inShop = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shop, fn, knex);

/** A PNG's signature and the start of its header: enough for the type sniffing. */
const png = (tag: number) =>
	new File(
		[new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, tag])],
		`photo-${tag}.png`,
		{ type: 'image/png' }
	);
const photoKey = async (): Promise<string | null> =>
	(await inShop((trx) => trx('machines').where({ id: machineId }).first('photo_key'))).photo_key;
const exists = (key: string) =>
	access(join(uploads, key)).then(
		() => true,
		() => false
	);
const storedFiles = () =>
	readdir(join(uploads, shop.schemaName, 'machines', String(machineId))).catch(() => []);

beforeAll(async () => {
	uploads = await mkdtemp(join(tmpdir(), 'dk-machine-photo-'));
	setEnv('UPLOADS_DIR', uploads);
	const email = `machine-photo-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: 'Machine Photo Shop', slug: `machine-photo-${uniqueSuffix()}` },
		{ name: 'Pia Photo', email, password: 'correct-horse-1' }
	);
	shop = created.shop;
	actor = { id: created.userId, email };
	[{ id: machineId }] = await inShop((trx) =>
		trx('machines')
			.insert({
				name: 'Photo Mill',
				units: 'mm',
				z_travel: 510,
				resolution: 0.001,
				control_style: 'rs274ngc',
				convention: 'reference-touch'
			})
			.returning('id')
	);
});
afterAll(async () => {
	await rm(uploads, { recursive: true, force: true });
});

describe('replacing a machine photo', () => {
	it('keeps the old file until the transaction commits, then removes it', async () => {
		expect(
			(await inShop((trx) => setMachinePhoto(trx, shop.schemaName, machineId, png(1), actor))).ok
		).toBe(true);
		const first = (await photoKey())!;
		expect(await exists(first)).toBe(true);

		let oldFileDuringTransaction: boolean | undefined;
		await inShop(async (trx) => {
			expect((await setMachinePhoto(trx, shop.schemaName, machineId, png(2), actor)).ok).toBe(true);
			// Still inside the transaction: other requests still read the old key, so its file stays.
			oldFileDuringTransaction = await exists(first);
		});
		expect(oldFileDuringTransaction).toBe(true);
		const second = (await photoKey())!;
		expect(second).not.toBe(first);
		await expect.poll(() => exists(first)).toBe(false);
		expect(await storedFiles()).toEqual([second.split('/').pop()]);
		expect((await inShop((trx) => readMachinePhoto(trx, machineId)))?.bytes.at(-1)).toBe(2);
	});

	it('keeps the old file and drops the new one when the transaction rolls back', async () => {
		const before = (await photoKey())!;
		await expect(
			inShop(async (trx) => {
				await setMachinePhoto(trx, shop.schemaName, machineId, png(3), actor);
				throw new Error('something later in the request failed');
			})
		).rejects.toThrow('something later in the request failed');
		expect(await photoKey()).toBe(before);
		expect(await exists(before)).toBe(true);
		await expect.poll(storedFiles).toEqual([before.split('/').pop()]);
		expect((await inShop((trx) => readMachinePhoto(trx, machineId)))?.bytes.at(-1)).toBe(2);
	});
});
