import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { config } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { databaseOf, shopRoleName } from '$lib/server/db/roles';
import { withShop } from '$lib/server/db/tenant';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';

/**
 * The second lock on every shop table (docs/SECURITY.md, "Append-only history and least
 * privilege"): the app role may become any shop's role, so SQL injected into one shop's
 * transaction could `SET ROLE` to another's. Row-level security keyed by the shop's token
 * (HMAC of the server secret, never stored in the database) refuses it. These run as the app
 * role (DATABASE_APP_URL) and play the injected SQL by hand.
 */
const admin: Knex = testDb();
const app: Knex = createDb(config.appDatabaseUrl);
type Shop = { id: number; schemaName: string; slug: string; name: string };
let shopA: Shop;
let shopB: Shop;
let roleB: string;

beforeAll(async () => {
	const make = async (label: string) =>
		(
			await createShopWithOwner(
				app,
				{ name: `Keys ${label}`, slug: `keys-${label}-${uniqueSuffix()}` },
				{
					name: 'K Owner',
					email: `keys-${label}-${uniqueSuffix()}@example.test`,
					password: 'correct-horse-1'
				}
			)
		).shop;
	shopA = await make('a');
	shopB = await make('b');
	roleB = shopRoleName(databaseOf(app), shopB.schemaName);
	await withShop(
		shopB,
		(trx) =>
			trx('machines').insert({
				name: 'Keys secret mill',
				units: 'mm',
				z_travel: 500,
				resolution: 0.001
			}),
		app
	);
});
afterAll(async () => {
	await app.destroy();
	await admin.destroy();
});

const inA = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shopA, fn, app);
const probeMachine = { name: 'Probe', units: 'mm', z_travel: 1, resolution: 0.001 };

describe("another shop's role, taken by SQL inside one shop's transaction", () => {
	it("SET ROLE to shop B's role reads none of B's rows and writes none", async () => {
		await expect(
			inA(async (trx) => {
				await trx.raw('set local role ??', [roleB]);
				return trx.raw('select name from ??.machines', [shopB.schemaName]);
			})
		).rejects.toThrow(/shop token does not open/);
		await expect(
			withShop(
				shopB,
				async (trx) => {
					await trx.raw("select set_config('datumkeep.shop_token', ?, true)", ['f'.repeat(64)]);
					return trx('machines').select('name');
				},
				app
			)
		).rejects.toThrow(/shop token does not open/);
		await expect(
			inA(async (trx) => {
				await trx.raw('set local role ??', [roleB]);
				return trx.withSchema(shopB.schemaName).table('machines').insert(probeMachine);
			})
		).rejects.toThrow(/shop token does not open|row-level security/);
		await expect(
			inA(async (trx) => {
				await trx.raw('set local role ??', [roleB]);
				return trx.raw('update ??.machines set name = ?', [shopB.schemaName, 'taken']);
			})
		).rejects.toThrow(/shop token does not open/);
	});

	it('RESET ROLE, then SET ROLE to shop B, is refused the same way', async () => {
		await expect(
			inA(async (trx) => {
				await trx.raw('reset role');
				await trx.raw('set role ??', [roleB]);
				return trx.raw('select count(*) from ??.machines', [shopB.schemaName]);
			})
		).rejects.toThrow(/shop token does not open/);
	});

	it('a made-up token (or none) opens no shop, not even its own', async () => {
		await expect(
			inA(async (trx) => {
				await trx.raw("select set_config('datumkeep.shop_token', ?, true)", ['0'.repeat(64)]);
				return trx('machines').insert(probeMachine);
			})
		).rejects.toThrow(/shop token does not open/);
		await expect(
			withShop(
				shopB,
				async (trx) => {
					await trx.raw("select set_config('datumkeep.shop_token', ?, true)", ['f'.repeat(64)]);
					return trx('machines').select('name');
				},
				app
			)
		).rejects.toThrow(/shop token does not open/);
		await expect(
			inA(async (trx) => {
				await trx.raw('set local role ??', [roleB]);
				await trx.raw("select set_config('datumkeep.shop_token', '', true)");
				return trx.raw('select count(*) from ??.machines', [shopB.schemaName]);
			})
		).rejects.toThrow(/no shop token/);
	});

	it('the key table and its hashes are out of reach of the app and shop roles', async () => {
		await expect(app.raw('select * from public.dk_shop_keys')).rejects.toThrow(/permission denied/);
		await expect(inA((trx) => trx.raw('select * from public.dk_shop_keys'))).rejects.toThrow(
			/permission denied/
		);
		await expect(
			app.raw('update public.dk_shop_keys set token_hash = ?', [Buffer.alloc(32)])
		).rejects.toThrow(/permission denied/);
		// Provisioning again over an existing schema (to key it anew) is refused.
		await expect(
			app.raw('select public.dk_begin_shop_schema(?, ?)', [shopB.schemaName, 'x'.repeat(64)])
		).rejects.toThrow(/already exists/);
	});

	it("marking B due for purge and calling the drop function cannot drop B without B's token", async () => {
		// The app role may write public.shops (deletion requests do), so injected SQL can make B
		// look due; the drop function then still wants B's token, which it cannot make.
		const { purge_after } = await admin('public.shops')
			.where({ id: shopB.id })
			.first('purge_after');
		await app('public.shops')
			.where({ id: shopB.id })
			.update({ purge_after: new Date(Date.now() - 60_000) });
		try {
			for (const token of ['x'.repeat(64), '', null])
				await expect(
					app.raw('select public.dk_drop_shop_schema(?, ?)', [shopB.schemaName, token])
				).rejects.toThrow(/does not open/);
			// A's token does not open B either (as A's transaction would have it).
			const tokenA = await inA(
				async (trx) =>
					(await trx.raw("select current_setting('datumkeep.shop_token') as t")).rows[0].t
			);
			await expect(
				app.raw('select public.dk_drop_shop_schema(?, ?)', [shopB.schemaName, tokenA])
			).rejects.toThrow(/does not open/);
			// The one-argument form that needed no token is gone.
			await expect(
				app.raw('select public.dk_drop_shop_schema(?)', [shopB.schemaName])
			).rejects.toThrow(/does not exist/);
		} finally {
			await admin('public.shops').where({ id: shopB.id }).update({ purge_after });
		}
		expect(await withShop(shopB, (trx) => trx('machines').pluck('name'), app)).toEqual([
			'Keys secret mill'
		]);
	});

	it("shop A's own work goes on, and B's data is untouched", async () => {
		await inA((trx) => trx('machines').insert({ ...probeMachine, name: 'Keys A mill' }));
		expect(await inA((trx) => trx('machines').pluck('name'))).toEqual(['Keys A mill']);
		expect(await withShop(shopB, (trx) => trx('machines').pluck('name'), app)).toEqual([
			'Keys secret mill'
		]);
	});
});

describe('every shop table carries the lock', () => {
	it('has row-level security on, with the shop-key policy, in every shop schema', async () => {
		const { rows } = await admin.raw(
			`select n.nspname as schema, c.relname as table, c.relrowsecurity as rls,
				(select count(*) from pg_policy p where p.polrelid = c.oid and p.polname = 'dk_shop_key'
					and pg_get_expr(p.polqual, p.polrelid) like '%dk_shop_ok(''' || n.nspname || '''%'
					and pg_get_expr(p.polwithcheck, p.polrelid) like '%dk_shop_ok(''' || n.nspname || '''%')::int as policies
			from pg_class c join pg_namespace n on n.oid = c.relnamespace
			where n.nspname ~ '^shop_[0-9]+$' and c.relkind in ('r', 'p')`
		);
		expect(rows.length).toBeGreaterThan(0);
		const unlocked = rows.filter(
			(r: { rls: boolean; policies: number }) => !r.rls || r.policies !== 1
		);
		expect(unlocked).toEqual([]);
	});

	it('no view, materialized view or SECURITY DEFINER function in a shop schema goes around it', async () => {
		const { rows: views } = await admin.raw(
			`select n.nspname, c.relname, c.relkind, c.reloptions from pg_class c
			join pg_namespace n on n.oid = c.relnamespace
			where n.nspname ~ '^shop_[0-9]+$' and (c.relkind = 'm'
				or (c.relkind = 'v' and not coalesce('security_invoker=true' = any(c.reloptions), false)))`
		);
		expect(views).toEqual([]);
		const { rows: fns } = await admin.raw(
			`select n.nspname, p.proname from pg_proc p join pg_namespace n on n.oid = p.pronamespace
			where n.nspname ~ '^shop_[0-9]+$' and p.prosecdef`
		);
		expect(fns).toEqual([]);
	});

	it('every shop schema has a key', async () => {
		const { rows } = await admin.raw(
			`select n.nspname from pg_namespace n where n.nspname ~ '^shop_[0-9]+$'
			and not exists (select 1 from public.dk_shop_keys k where k.schema_name = n.nspname)`
		);
		expect(rows).toEqual([]);
	});
});
