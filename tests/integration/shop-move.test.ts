import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import type { RequestEvent } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { config } from '$lib/server/config';
import { closeDb, createDb } from '$lib/server/db';
import { migratePublic } from '$lib/server/db/migrate';
import { OWNER_ROLE, shopRoleName } from '$lib/server/db/roles';
import { closeServers, SHOP_MOVING_MESSAGE } from '$lib/server/db/servers';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { createMachine } from '$lib/server/machines/service';
import { processShopCheck } from '../../workers/shop-checks/processor';
import { moveShop, type MoveStep } from '$lib/server/shops/move';
import { schemaExists, testDb } from './db';
import { setEnv } from './env';
import { freePort, startSecondCluster, type SecondCluster } from './second-cluster';
import { newTestMill } from './test-mill';

/**
 * Moving a shop's schema to a second PostgreSQL server (npm run shop:move; docs/DEPLOYMENT.md).
 * Server A is the test database; server B is a throw-away cluster started here on loopback,
 * set up as an operator would (npm run db:roles and npm run migrate against it).
 */
const run = promisify(execFile);
const home: Knex = testDb();
// The app's own role at home: the shop's grants (withdrawn during a move) bind it, not the superuser.
const app: Knex = createDb(config.appDatabaseUrl);
let second: SecondCluster;
let b: Knex;
const B_DATABASE = 'datumkeep_b_test';

type Mill = Awaited<ReturnType<typeof newTestMill>>;
let moving: Mill;
let bystander: Mill;

const log: string[] = [];
const adminUrl = (server: string) =>
	server === 'home' ? config.databaseUrl : config.databaseServersAdmin[server];

async function addReading(shop: ShopRef, machineId: number, z: number, conn: Knex = home) {
	return withShop(
		shop,
		async (trx) => {
			const [r] = await trx('readings')
				.insert({ machine_id: machineId, kind: 'reference', machine_z: z, reference_version: 1 })
				.returning('id');
			return Number(r.id);
		},
		conn
	);
}

async function counts(k: Knex, schema: string) {
	const { rows } = await k.raw(
		`select (select count(*) from ??.readings)::int as readings,
		(select count(*) from ??.machines)::int as machines,
		(select count(*) from ??.reference_surfaces)::int as refs`,
		[schema, schema, schema]
	);
	return rows[0];
}

const mapOf = (shopId: number) =>
	home('public.shop_servers').where({ shop_id: shopId }).first('server', 'moving_to');

/** A form action / API write (or a read) as SvelteKit would hand it to the guard. */
function event(slug: string, user: { id: number; email: string }, method: 'GET' | 'POST') {
	const url = new URL(`${config.origin}/api/v1/shops/${slug}/machines`);
	return {
		url,
		params: { shop: slug },
		locals: { user: { ...user, name: 'Mover' } },
		request: new Request(url, { method }),
		getClientAddress: () => '127.0.0.1'
	} as unknown as RequestEvent;
}

/** The app role can write to the shop (its grants are in place and nothing refuses). */
async function writableByApp(m: Mill) {
	const id = await addReading(m.shop, m.machineId, 1.5, app);
	return id > 0;
}

beforeAll(async () => {
	second = await startSecondCluster();
	await run('psql', [second.url('postgres'), '-qc', `create database ${B_DATABASE}`]);
	// Server B set up as docs/DEPLOYMENT.md says: the roles, then the public migrations.
	const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: second.url(B_DATABASE) };
	delete env.DATABASE_SERVERS;
	delete env.DATABASE_APP_URL;
	await run('node_modules/.bin/tsx', ['scripts/db-roles.ts'], { env });
	// (npm run migrate's first half, in-process: B holds no shop yet.)
	const owner = createDb(second.url(B_DATABASE), { role: OWNER_ROLE });
	await migratePublic(owner).finally(() => owner.destroy());
	b = createDb(second.url(B_DATABASE));
	// "down": a configured server nobody answers on (a loopback port the kernel just gave out
	// and took back, so never another program's server).
	setEnv(
		'DATABASE_SERVERS',
		`b=${second.url(B_DATABASE)},down=postgres://postgres@127.0.0.1:${await freePort()}/gone_test`
	);

	const mill = (slug: string) =>
		newTestMill(home, {
			slug,
			person: 'Mover',
			shopName: `Move ${slug}`,
			machineName: 'VMC move',
			referenceDaysAgo: 1
		});
	moving = await mill('move-me');
	bystander = await mill('move-not');
	for (const m of [moving, bystander]) {
		await home('memberships').insert({ user_id: m.actor.id, shop_id: m.shop.id, role: 'owner' });
		for (const z of [-10.1234, -10.1236, -10.1231]) await addReading(m.shop, m.machineId, z);
	}
}, 120_000);

afterAll(async () => {
	// Whatever happened above, the test database is left with every shop at home (later tests
	// and the e2e worker walk all shops, with no DATABASE_SERVERS set).
	if (moving && (await mapOf(moving.shop.id))?.server !== 'home') {
		const { rows } = await home.raw(
			'select nspname from pg_namespace where nspname like ? order by 1 desc limit 1',
			[`${moving.shop.schemaName}_moved_%`]
		);
		if (rows[0] && !(await schemaExists(home, moving.shop.schemaName)))
			await home.raw('alter schema ?? rename to ??', [rows[0].nspname, moving.shop.schemaName]);
		await home('shop_servers')
			.where({ shop_id: moving.shop.id })
			.update({ server: 'home', moving_to: null, moving_since: null });
	}
	if (moving)
		for (const { nspname } of (
			await home.raw('select nspname from pg_namespace where nspname like ?', [
				`${moving.shop.schemaName}_moved_%`
			])
		).rows)
			await home.raw('drop schema ?? cascade', [nspname]);
	setEnv('DATABASE_SERVERS', undefined);
	await closeServers();
	await closeDb();
	await Promise.all([home.destroy(), app.destroy(), b?.destroy()]);
	await second?.stop();
});

describe('npm run shop:move', () => {
	it('a failure before the switch leaves the shop on A, writable, and nothing on B', async () => {
		const before = await counts(home, moving.shop.schemaName);
		await expect(
			moveShop({ slug: slugOf(moving), to: 'down', home, adminUrl, log: (m) => log.push(m) })
		).rejects.toThrow(/ECONNREFUSED|connect/);
		let fail: MoveStep = 'restored';
		for (fail of ['restored', 'verified'] as MoveStep[]) {
			await expect(
				moveShop({
					slug: slugOf(moving),
					to: 'b',
					home,
					adminUrl,
					afterStep: (s) => {
						if (s === fail) throw new Error(`injected failure after ${s}`);
					}
				})
			).rejects.toThrow(`injected failure after ${fail}`);
			expect(await schemaExists(b, moving.shop.schemaName)).toBe(false);
		}
		expect(await mapOf(moving.shop.id)).toEqual({ server: 'home', moving_to: null });
		expect(await counts(home, moving.shop.schemaName)).toEqual(before);
		// The shop's role has its write grants back: the app role writes again.
		expect(await writableByApp(moving)).toBe(true);
	});

	it('moves a shop to B: read-only meanwhile, data and append-only rules intact, then served from B', async () => {
		const before = await counts(home, moving.shop.schemaName);
		const bystanderBefore = await counts(home, bystander.shop.schemaName);
		const seen: Partial<Record<MoveStep, boolean>> = {};
		const result = await moveShop({
			slug: slugOf(moving),
			to: 'b',
			home,
			adminUrl,
			log: (m) => log.push(m),
			afterStep: async (s) => {
				seen[s] = true;
				if (s !== 'dumped') return;
				// Mid-move: the guard refuses writes (503, plain words) and lets reads through…
				await expect(
					requireMember(event(slugOf(moving), moving.actor, 'POST'), 'shop.read')
				).rejects.toMatchObject({ status: 503, body: { message: SHOP_MOVING_MESSAGE } });
				const read = await requireMember(event(slugOf(moving), moving.actor, 'GET'), 'shop.read');
				expect(read.shop.movingTo).toBe('b');
				// …and the database refuses a write that does not pass the guard (a worker's).
				await expect(addReading(moving.shop, moving.machineId, 2, app)).rejects.toMatchObject({
					status: 503
				});
				expect(
					await withShop(
						moving.shop,
						async (trx) => (await trx('readings').count('* as n'))[0].n,
						app
					)
				).toBe(String(before.readings));
				// The worker's shop check is refused in plain words (BullMQ retries it later).
				await expect(
					processShopCheck(
						{ id: 'move-check', name: 'manual', data: { shopId: moving.shop.id }, timestamp: 0 },
						app
					)
				).rejects.toThrow(SHOP_MOVING_MESSAGE);
				// A second run of the same move meanwhile is refused and changes nothing.
				await expect(moveShop({ slug: slugOf(moving), to: 'b', home, adminUrl })).rejects.toThrow(
					/already being moved by another run/
				);
				// Other shops carry on.
				expect(await writableByApp(bystander)).toBe(true);
			}
		});
		expect(result.outcome).toBe('moved');
		expect(Object.keys(seen)).toEqual([
			'read-only',
			'drained',
			'dumped',
			'restored',
			'verified',
			'switched',
			'source-kept',
			'writable'
		]);
		// B holds the same rows; A keeps the old copy aside (renamed), out of the app's reach.
		expect(await counts(b, moving.shop.schemaName)).toEqual(before);
		expect(result.rows?.readings).toBe(before.readings);
		expect(await schemaExists(home, moving.shop.schemaName)).toBe(false);
		expect(result.keptAs).toMatch(new RegExp(`^${moving.shop.schemaName}_moved_\\d{12}$`));
		expect(await schemaExists(home, result.keptAs!)).toBe(true);
		expect(await mapOf(moving.shop.id)).toEqual({ server: 'b', moving_to: null });

		// B knows the shop's key (row-level security opens its tables only with it), the same as A's.
		const keyOf = async (k: Knex) =>
			(
				await k.raw(
					"select encode(token_hash, 'hex') as h from public.dk_shop_keys where schema_name = ?",
					[moving.shop.schemaName]
				)
			).rows[0]?.h;
		expect(await keyOf(b)).toMatch(/^[0-9a-f]{64}$/);
		expect(await keyOf(b)).toBe(await keyOf(home));

		// Append-only on B: even the superuser's UPDATE of a reading is refused by the trigger.
		await expect(
			b.raw('update ??.readings set machine_z = 0', [moving.shop.schemaName])
		).rejects.toThrow(/append-only|not allowed|refuse/i);
		// And B's own shop role (named after B's database) may insert but not update.
		const role = shopRoleName(B_DATABASE, moving.shop.schemaName);
		const { rows } = await b.raw(
			"select has_table_privilege(?, ?, 'INSERT') as ins, has_table_privilege(?, ?, 'UPDATE') as upd",
			[role, `${moving.shop.schemaName}.readings`, role, `${moving.shop.schemaName}.readings`]
		);
		expect(rows[0]).toEqual({ ins: true, upd: false });

		// withShop finds the shop on B through the map: the guard's membership names the server…
		const member = await requireMember(event(slugOf(moving), moving.actor, 'POST'), 'shop.read');
		expect(member.shop.server).toBe('b');
		const id = await addReading(member.shop, moving.machineId, -10.123);
		// …and a caller that knows only id and schema (the worker) is routed too.
		const bare = { id: moving.shop.id, schemaName: moving.shop.schemaName };
		const latest = await withShop(bare, (trx) => trx('readings').max('id as id').first());
		expect(Number(latest?.id)).toBe(id);
		expect((await counts(b, moving.shop.schemaName)).readings).toBe(before.readings + 1);
		// Adding a machine (plan gate at home, the machine on B) works for the moved shop too.
		const added = await createMachine(
			home,
			member.shop,
			{
				name: 'HMC moved',
				units: 'mm',
				zTravel: 500,
				resolution: 0.001,
				controlStyle: 'iso',
				convention: 'reference-touch',
				notes: '',
				instrument: '1-2-3 block',
				height: 76.2,
				location: '',
				note: ''
			},
			moving.actor
		);
		expect(added.ok).toBe(true);
		expect((await counts(b, moving.shop.schemaName)).machines).toBe(before.machines + 1);

		// The other shop never moved and lost nothing (one row added above by the app role).
		expect(await mapOf(bystander.shop.id)).toEqual({ server: 'home', moving_to: null });
		expect(await counts(home, bystander.shop.schemaName)).toEqual({
			...bystanderBefore,
			readings: bystanderBefore.readings + 1
		});

		// Running it again changes nothing.
		const again = await moveShop({ slug: slugOf(moving), to: 'b', home, adminUrl });
		expect(again.outcome).toBe('already-there');
		expect(log.some((l) => l.startsWith('verified:'))).toBe(true);
	});

	it('moves it back home: the same rows, served from A again', async () => {
		const onB = await counts(b, moving.shop.schemaName);
		const result = await moveShop({ slug: slugOf(moving), to: 'home', home, adminUrl });
		expect(result).toMatchObject({ outcome: 'moved', from: 'b', to: 'home' });
		expect(await counts(home, moving.shop.schemaName)).toEqual(onB);
		expect(await schemaExists(b, moving.shop.schemaName)).toBe(false);
		expect(await mapOf(moving.shop.id)).toEqual({ server: 'home', moving_to: null });
		const bare = { id: moving.shop.id, schemaName: moving.shop.schemaName };
		const id = await addReading(bare, moving.machineId, -10.1229, app);
		expect((await counts(home, moving.shop.schemaName)).readings).toBe(onB.readings + 1);
		expect(id).toBeGreaterThan(0);
	});
});

function slugOf(m: Mill): string {
	return (m.shop as ShopRef & { slug: string }).slug;
}
