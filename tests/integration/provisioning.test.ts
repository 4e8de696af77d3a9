import { readdirSync } from 'node:fs';
import type { Knex } from 'knex';
import { afterAll, describe, expect, it } from 'vitest';
import { createDb } from '$lib/server/db';
import { migrateAll, migrationNames } from '$lib/server/db/migrate';
import { OWNER_ROLE } from '$lib/server/db/roles';
import { withShop } from '$lib/server/db/tenant';
import { provisionShop } from '$lib/server/shops/provision';
import { createShopWithOwner } from '$lib/server/shops/create';
import { schemaExists, tablesIn, testDb, uniqueSuffix } from './db';

const knex: Knex = testDb();
afterAll(() => knex.destroy());

/** Tables every shop schema has at least (later migrations add more). */
const SHOP_TABLES = [
	'audit_log',
	'findings',
	'fixtures',
	'knex_migrations',
	'knex_migrations_lock',
	'machines',
	'offset_versions',
	'readings',
	'reference_surfaces',
	'setup_fixtures',
	'setup_ops',
	'setup_tools',
	'setups',
	'tools'
];

describe('shop schema provisioning (real PostgreSQL)', () => {
	it('gives a new shop its own schema with every shop table and its own migrations record', async () => {
		const slug = `prov-${uniqueSuffix()}`;
		const shop = await provisionShop(knex, { name: 'Provision Test', slug });
		expect(shop.schemaName).toBe(`shop_${shop.id}`);
		expect(await schemaExists(knex, shop.schemaName)).toBe(true);
		expect(await tablesIn(knex, shop.schemaName)).toEqual(expect.arrayContaining(SHOP_TABLES));
		// …and nothing of the shop's lands in public.
		expect(await tablesIn(knex, 'public')).not.toContain('machines');
		const ran = await knex.withSchema(shop.schemaName).from('knex_migrations').pluck('name');
		expect(ran.sort()).toEqual(migrationNames.shop());
		const row = await knex('shops').where({ id: shop.id }).first();
		expect(row.schema_name).toBe(shop.schemaName);
	});

	it('leaves nothing behind when a step fails half-way (no shop row, no schema, no user)', async () => {
		const slug = `half-${uniqueSuffix()}`;
		const email = `half-${uniqueSuffix()}@example.test`;
		let schemaSeen = '';
		await expect(
			knex.transaction(async (trx) => {
				await trx('users').insert({ email, name: 'Half Way', password_hash: 'x' });
				await provisionShop(trx, { name: 'Half Way', slug }, async (inner, created) => {
					schemaSeen = created.schemaName;
					// The schema exists inside the transaction at this point…
					const { rows } = await inner.raw(
						'select 1 from information_schema.schemata where schema_name = ?',
						[created.schemaName]
					);
					expect(rows).toHaveLength(1);
					// …and then the membership step fails for real: 'boss' is not a role.
					await inner('public.memberships').insert({
						user_id: 1,
						shop_id: created.id,
						role: 'boss'
					});
				});
			})
		).rejects.toThrow(/memberships_role_check/);
		expect(schemaSeen).toMatch(/^shop_\d+$/);
		expect(await schemaExists(knex, schemaSeen)).toBe(false);
		expect(await knex('shops').where({ slug }).first()).toBeUndefined();
		expect(await knex('users').where({ email }).first()).toBeUndefined();
	});

	it('sign-up that fails on a taken shop address keeps no account', async () => {
		const email = `taken-${uniqueSuffix()}@example.test`;
		await expect(
			createShopWithOwner(
				knex,
				{ name: 'Copycat', slug: 'fernhill-precision' },
				{ name: 'X', email, password: 'abcdefghij1' }
			)
		).rejects.toMatchObject({ code: '23505' });
		expect(await knex('users').where({ email }).first()).toBeUndefined();
	});

	it('migrate-all brings every shop schema up to date, each tracked on its own, and is idempotent', async () => {
		const a = await provisionShop(knex, { name: 'Behind A', slug: `behind-a-${uniqueSuffix()}` });
		const b = await provisionShop(knex, { name: 'Current B', slug: `current-b-${uniqueSuffix()}` });
		// Put shop A one migration behind: undo the newest shop migration there only.
		const newest = migrationNames.shop().at(-1)!;
		const { shopMigrations } = await import('$migrations/shop/index');
		await knex.transaction(async (trx) => {
			await trx.raw('set local search_path to ??, public', [a.schemaName]);
			await shopMigrations[newest].down!(trx);
			await trx('knex_migrations').where({ name: newest }).del();
		});
		// Migrations run as the owner role, as `npm run migrate` does (scripts/migrate.ts): a table
		// they create is the owner's, so sealing the schema can hand out its grants.
		const asOwner = createDb(process.env.DATABASE_URL!, { role: OWNER_ROLE });
		try {
			const first = await migrateAll(asOwner);
			expect(first.shops[a.schemaName]).toEqual([newest]);
			expect(first.shops[b.schemaName]).toEqual([]);
			const second = await migrateAll(asOwner);
			expect(second.public).toEqual([]);
			expect(Object.values(second.shops).flat()).toEqual([]);
		} finally {
			await asOwner.destroy();
		}
	});

	it('lists every migration file in the static migration indexes (nothing forgotten)', () => {
		for (const [folder, names] of [
			['migrations/public', migrationNames.public()],
			['migrations/shop', migrationNames.shop()]
		] as const) {
			const files = readdirSync(folder)
				.filter((f) => /^\d{14}_.+\.ts$/.test(f))
				.map((f) => f.replace(/\.ts$/, ''))
				.sort();
			expect(names, folder).toEqual(files);
		}
	});
});

describe('tenant-scoped queries', () => {
	it('withShop reaches only the named shop: the same table name means different rows per shop', async () => {
		const a = await provisionShop(knex, { name: 'Iso A', slug: `iso-a-${uniqueSuffix()}` });
		const b = await provisionShop(knex, { name: 'Iso B', slug: `iso-b-${uniqueSuffix()}` });
		await withShop(
			a,
			(trx) =>
				trx('machines').insert({
					name: 'Only in A',
					units: 'inch',
					z_travel: 20,
					resolution: 0.0001
				}),
			knex
		);
		const inA = await withShop(a, (trx) => trx('machines').pluck('name'), knex);
		const inB = await withShop(b, (trx) => trx('machines').pluck('name'), knex);
		expect(inA).toEqual(['Only in A']);
		expect(inB).toEqual([]);
	});

	it("commits before passing on SvelteKit's redirect (a redirect after a write must not undo it)", async () => {
		const { redirect, isRedirect } = await import('@sveltejs/kit');
		const shop = await provisionShop(knex, {
			name: 'Redirect',
			slug: `redirect-${uniqueSuffix()}`
		});
		const thrown = await withShop(
			shop,
			async (trx) => {
				await trx('machines').insert({
					name: 'Kept',
					units: 'mm',
					z_travel: 500,
					resolution: 0.001
				});
				redirect(303, '/somewhere');
			},
			knex
		).catch((e) => e);
		expect(isRedirect(thrown)).toBe(true);
		expect(await withShop(shop, (trx) => trx('machines').pluck('name'), knex)).toEqual(['Kept']);
		// Any other error still rolls back.
		await expect(
			withShop(
				shop,
				async (trx) => {
					await trx('machines').insert({
						name: 'Dropped',
						units: 'mm',
						z_travel: 500,
						resolution: 0.001
					});
					throw new Error('boom');
				},
				knex
			)
		).rejects.toThrow('boom');
		expect(await withShop(shop, (trx) => trx('machines').pluck('name'), knex)).toEqual(['Kept']);
	});

	it('refuses a schema name that is not a shop schema', async () => {
		await expect(
			withShop({ id: 1, schemaName: 'public; drop table users' }, async () => 1, knex)
		).rejects.toThrow(/not a shop schema name/);
	});

	it('keeps readings append-only in the database itself', async () => {
		const shop = await knex('shops').where({ slug: 'fernhill-precision' }).first();
		const ref = { id: Number(shop.id), schemaName: shop.schema_name };
		await expect(
			withShop(ref, (trx) => trx('readings').update({ machine_z: 0 }), knex)
		).rejects.toThrow(/append-only/);
		await expect(withShop(ref, (trx) => trx('readings').del(), knex)).rejects.toThrow(
			/append-only/
		);
		await expect(
			withShop(ref, (trx) => trx('offset_versions').update({ value: 0 }), knex)
		).rejects.toThrow(/append-only/);
	});
});
