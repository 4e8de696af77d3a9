import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { config } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { APP_ROLE, OWNER_ROLE } from '$lib/server/db/roles';
import { withShop } from '$lib/server/db/tenant';
import { createShopWithOwner } from '$lib/server/shops/create';
import { testDb, uniqueSuffix } from './db';

/**
 * Least privilege: the app and the worker log in as a least-privilege role (DATABASE_APP_URL). These
 * run as that role, against the real PostgreSQL, and prove what it cannot do. On a database
 * where the app is the superuser, every one of them fails.
 */
const admin: Knex = testDb();
const appUrl = config.appDatabaseUrl;
const app: Knex = createDb(appUrl);
type Shop = { id: number; schemaName: string; slug: string; name: string };
let shopA: Shop;
let shopB: Shop;

beforeAll(async () => {
	// Signed up through the app role, as at runtime: provisioning must work without DDL rights.
	const make = async (label: string) =>
		(
			await createShopWithOwner(
				app,
				{ name: `Roles ${label}`, slug: `roles-${label}-${uniqueSuffix()}` },
				{
					name: 'R Owner',
					email: `roles-${label}-${uniqueSuffix()}@example.test`,
					password: 'correct-horse-1'
				}
			)
		).shop;
	shopA = await make('a');
	shopB = await make('b');
	await withShop(
		shopA,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: 'Roles mill', units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			await trx('reference_surfaces').insert({
				machine_id: m.id,
				version: 1,
				instrument: 'gauge block',
				height: 2
			});
			await trx('tools').insert({
				machine_id: m.id,
				t_number: 1,
				h_number: 1,
				description: 'drill'
			});
			const [t] = await trx('tools').where({ machine_id: m.id }).select('id');
			await trx('readings').insert({
				machine_id: m.id,
				kind: 'tool-touch',
				tool_id: t.id,
				machine_z: -10,
				block_height: 2,
				reference_version: 1
			});
		},
		app
	);
});
afterAll(async () => {
	await app.destroy();
	await admin.destroy();
});

const inA = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shopA, fn, app);

describe('the app role (DATABASE_APP_URL)', () => {
	it('is a separate, non-superuser role that owns nothing', async () => {
		expect(new URL(appUrl).username).toBe(APP_ROLE);
		const { rows } = await app.raw(
			`select current_user as me, r.rolsuper, r.rolcreaterole, r.rolcreatedb, r.rolbypassrls,
				(select count(*) from pg_class c where c.relowner = r.oid)::int as owns
			from pg_roles r where r.rolname = current_user`
		);
		expect(rows[0]).toEqual({
			me: APP_ROLE,
			rolsuper: false,
			rolcreaterole: false,
			rolcreatedb: false,
			rolbypassrls: false,
			owns: 0
		});
	});

	it('a shop provisioned by the app is owned by the owner role, not the app', async () => {
		const { rows } = await admin.raw(
			`select distinct pg_get_userbyid(c.relowner) as owner from pg_class c
			join pg_namespace n on n.oid = c.relnamespace where n.nspname in (?, ?)`,
			[shopA.schemaName, shopB.schemaName]
		);
		expect(rows).toEqual([{ owner: OWNER_ROLE }]);
	});

	it('cannot switch off the append-only triggers', async () => {
		await expect(inA((trx) => trx.raw('alter table readings disable trigger all'))).rejects.toThrow(
			/must be owner/
		);
		await expect(
			inA((trx) => trx.raw('drop trigger readings_append_only on readings'))
		).rejects.toThrow(/must be owner/);
		await expect(
			inA((trx) => trx.raw('set local session_replication_role = replica'))
		).rejects.toThrow(/permission denied/);
		await expect(app.raw('set session_replication_role = replica')).rejects.toThrow(
			/permission denied/
		);
	});

	it('cannot update or delete a reading (no privilege, and the trigger behind it)', async () => {
		await expect(inA((trx) => trx('readings').update({ machine_z: -11 }))).rejects.toThrow(
			/permission denied for table readings/
		);
		await expect(inA((trx) => trx('readings').del())).rejects.toThrow(/permission denied/);
		await expect(inA((trx) => trx.raw('truncate readings'))).rejects.toThrow(/permission denied/);
		const n = await inA(async (trx) => Number((await trx('readings').count({ n: '*' }))[0].n));
		expect(n).toBe(1);
	});

	it("inside one shop's transaction, another shop's schema is refused", async () => {
		await expect(
			inA((trx) => trx.raw('select * from ??.machines', [shopB.schemaName]))
		).rejects.toThrow(/permission denied for schema/);
		await expect(
			inA((trx) =>
				trx.raw('insert into ??.audit_log (actor_email, action) values (?, ?)', [
					shopB.schemaName,
					'x@example.test',
					'probe'
				])
			)
		).rejects.toThrow(/permission denied for schema/);
	});

	it('outside withShop it reaches no shop table at all', async () => {
		await expect(app.raw('select * from ??.machines', [shopA.schemaName])).rejects.toThrow(
			/permission denied/
		);
	});

	it('cannot create or drop tables, in public or in a shop', async () => {
		await expect(app.raw('create table public.probe (id int)')).rejects.toThrow(
			/permission denied/
		);
		await expect(inA((trx) => trx.raw('create table probe (id int)'))).rejects.toThrow(
			/permission denied/
		);
		await expect(app.raw('drop table public.users')).rejects.toThrow(/must be owner/);
	});

	it('still does its work: reads and appends in its own shop, reads public', async () => {
		const machines = await inA((trx) => trx('machines').select('name'));
		expect(machines).toEqual([{ name: 'Roles mill' }]);
		await inA((trx) =>
			trx('audit_log').insert({ actor_email: 'r@example.test', action: 'probe.ok' })
		);
		const shops = await app('shops').where({ id: shopA.id }).first('slug');
		expect(shops.slug).toBe(shopA.slug);
	});
});
