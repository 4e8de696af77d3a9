import { mkdir, readFile, stat, writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { parse } from 'csv-parse/sync';
import type { Knex } from 'knex';
import { afterAll, describe, expect, it } from 'vitest';
import yauzl from 'yauzl';
import { config } from '$lib/server/config';
import { withShop } from '$lib/server/db/tenant';
import { purgeShop, requestDeletion, restoreShop } from '$lib/server/shops/deletion';
import { buildExport, exportForToken, requestExport } from '$lib/server/shops/export';
import { createShopWithOwner } from '$lib/server/shops/create';
import { formerMembership } from '$lib/server/shops/lifecycle';
import { schemaExists, testDb, uniqueSuffix } from './db';
import { linkIn, mailsTo } from './mail';

/**
 * Leaving (issue 18) against the real PostgreSQL, the fake SES and the files on disk: the export
 * archive holds every table with the rows the database holds; deletion waits out its grace
 * period, can be restored, and then drops the schema and the uploads.
 */
const knex: Knex = testDb();
afterAll(() => knex.destroy());

/** Every entry of a zip file, as text. */
async function unzip(path: string): Promise<Map<string, string>> {
	const zip = await new Promise<yauzl.ZipFile>((ok, fail) =>
		yauzl.open(path, { lazyEntries: true }, (e, z) => (e ? fail(e) : ok(z!)))
	);
	const files = new Map<string, string>();
	await new Promise<void>((ok, fail) => {
		zip.on('entry', (entry: yauzl.Entry) => {
			zip.openReadStream(entry, (e, stream) => {
				if (e) return fail(e);
				const chunks: Buffer[] = [];
				stream!.on('data', (c: Buffer) => chunks.push(c));
				stream!.on('end', () => {
					files.set(entry.fileName, Buffer.concat(chunks).toString('utf8'));
					zip.readEntry();
				});
			});
		});
		zip.on('end', ok);
		zip.on('error', fail);
		zip.readEntry();
	});
	return files;
}

describe('export everything', () => {
	it('writes one CSV per table with exactly the rows the database holds, and e-mails a link', async () => {
		// The demo shop: machines, readings, offset versions, setups, programs, findings, audit.
		const row = await knex('shops')
			.where({ slug: 'fernhill-precision' })
			.first('id', 'schema_name', 'slug');
		const shop = { id: Number(row.id), schemaName: row.schema_name, slug: row.slug };
		const owner = await knex('users').where({ email: 'ada@fernhill.example' }).first('id', 'email');
		const { id } = await requestExport(knex, shop, { id: Number(owner.id), email: owner.email });
		const progress: number[] = [];
		expect(await buildExport(knex, id, (p) => void progress.push(p))).toBe('done');
		expect(progress.length).toBeGreaterThan(5);
		expect(progress).toEqual([...progress].sort((a, b) => a - b));
		// A second run of the same job (a retry) changes nothing.
		expect(await buildExport(knex, id)).toBe('skipped');

		const exp = await knex('shop_exports').where({ id }).first();
		expect(exp.status).toBe('done');
		expect(exp.progress).toBe(100);
		const path = join(resolve(config.uploadsDir), shop.schemaName, 'exports', `export-${id}.zip`);
		const files = await unzip(path);
		const manifest = JSON.parse(files.get('manifest.json')!);

		const tables: string[] = (
			await knex.raw(
				`select table_name from information_schema.tables where table_schema = ? and table_type = 'BASE TABLE' and table_name not like 'knex_%' order by 1`,
				[shop.schemaName]
			)
		).rows.map((r: { table_name: string }) => r.table_name);
		expect(manifest.tables.map((t: { table: string }) => t.table)).toEqual(tables);
		for (const name of [
			'machines',
			'reference_surfaces',
			'fixtures',
			'tools',
			'readings',
			'offset_versions',
			'setups',
			'programs',
			'findings',
			'audit_log'
		]) {
			expect(tables).toContain(name);
		}
		for (const t of manifest.tables) {
			const [{ n }] = await withShop(shop, (trx) => trx(t.table).count({ n: '*' }), knex);
			const csv: string[][] = parse(files.get(t.file)!);
			expect(csv[0], t.table).toEqual(t.columns);
			expect(csv.length - 1, t.table).toBe(Number(n));
			expect(t.rows, t.table).toBe(Number(n));
		}
		const readings = manifest.tables.find((t: { table: string }) => t.table === 'readings');
		expect(readings.rows).toBeGreaterThan(10);

		// The e-mailed link carries the token; it works until it expires, then it does not.
		const mail = (await mailsTo(owner.email)).find((m) => m.subject.includes('export'))!;
		const token = new URL(linkIn(mail, /\/settings\/export\//)).pathname.split('/').pop()!;
		expect(await exportForToken(knex, shop, token)).toMatchObject({ path });
		expect(await exportForToken(knex, shop, 'x'.repeat(43))).toBeUndefined();
		const later = new Date(Date.now() + 8 * 86_400_000);
		expect(await exportForToken(knex, shop, token, later)).toEqual({ expired: true });
	});
});

describe('delete the shop', () => {
	it('waits out the grace period read-only, can be restored, then drops schema and uploads', async () => {
		const email = `leaving-${uniqueSuffix()}@example.test`;
		const { shop: created, userId } = await createShopWithOwner(
			knex,
			{ name: 'Leaving Works', slug: `leaving-${uniqueSuffix()}` },
			{ name: 'Lee Owner', email, password: 'correct-horse-1' }
		);
		const shop = { ...created };
		const by = { id: userId, email, name: 'Lee Owner' };
		const [op] = await knex('users')
			.insert({ email: `op-${uniqueSuffix()}@example.test`, name: 'Opal' })
			.returning('id');
		await knex('memberships').insert({ user_id: op.id, shop_id: shop.id, role: 'operator' });
		const uploads = join(resolve(config.uploadsDir), shop.schemaName, 'setups');
		await mkdir(uploads, { recursive: true });
		await writeFile(join(uploads, 'photo.jpg'), 'not really a photo');

		// Asked: not dropped before its time, however often the job runs.
		const first = await requestDeletion(knex, shop, by);
		expect(first.ok).toBe(true);
		const s1 = await knex('shops').where({ id: shop.id }).first();
		expect(s1.deletion_requested_at).not.toBeNull();
		expect(new Date(s1.purge_after).getTime() - Date.now()).toBeGreaterThan(13.9 * 86_400_000);
		expect(await purgeShop(knex, shop.id)).toBe('not-due');
		expect(await schemaExists(knex, shop.schemaName)).toBe(true);
		expect((await mailsTo(email)).some((m) => /will be deleted/.test(m.subject))).toBe(true);

		// Restored by the owner: nothing is pending any more.
		expect(await restoreShop(knex, shop, by)).toEqual({ ok: true });
		expect((await knex('shops').where({ id: shop.id }).first()).purge_after).toBeNull();
		expect(await purgeShop(knex, shop.id, new Date(Date.now() + 30 * 86_400_000))).toBe('not-due');

		// Asked again with a zero grace period (as tests set it), then dropped.
		process.env.SHOP_DELETION_GRACE_SECONDS = '0';
		try {
			expect((await requestDeletion(knex, shop, by)).ok).toBe(true);
		} finally {
			delete process.env.SHOP_DELETION_GRACE_SECONDS;
		}
		expect(await purgeShop(knex, shop.id)).toBe('purged');
		expect(await purgeShop(knex, shop.id)).toBe('not-due');
		expect(await schemaExists(knex, shop.schemaName)).toBe(false);
		expect(await stat(uploads).catch(() => null)).toBeNull();
		expect(await knex('memberships').where({ shop_id: shop.id }).count({ n: '*' })).toEqual([
			{ n: '0' }
		]);
		const s2 = await knex('shops').where({ id: shop.id }).first();
		expect(s2.purged_at).not.toBeNull();
		expect(s2.schema_name).toBeNull();

		// The public log keeps the story; both former members learn the shop is gone.
		const log = await knex('shop_lifecycle_log')
			.where({ shop_id: shop.id })
			.orderBy('id')
			.pluck('action');
		expect(log).toEqual([
			'shop.deletion-requested',
			'shop.restored',
			'shop.deletion-requested',
			'shop.purged'
		]);
		await expect(knex('shop_lifecycle_log').where({ shop_id: shop.id }).del()).rejects.toThrow(
			/append-only/
		);
		expect(await formerMembership(knex, Number(op.id), shop.slug)).toMatchObject({
			reason: 'deleted'
		});
		expect(await formerMembership(knex, 999_999_999, shop.slug)).toBeUndefined();
		expect((await mailsTo(email)).some((m) => /has been deleted/.test(m.subject))).toBe(true);
		expect(await readFile(join(uploads, 'photo.jpg')).catch(() => null)).toBeNull();
	});
});
