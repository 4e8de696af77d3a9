import { createServer, Socket, type AddressInfo, type Server } from 'node:net';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { config } from '$lib/server/config';
import { createChangeFeed, type ChangeFeed, type ChangeMessage } from '$lib/server/db/change-feed';
import { withShop } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { createBoardCache } from '$lib/server/fleet/board-cache';
import { provisionShop, type ProvisionedShop } from '$lib/server/shops/provision';
import { BOARD_TABLES } from '$migrations/shop/20261204090000_notify_board_changes';
import { testDb, uniqueSuffix } from './db';

/**
 * The change feed on the real PostgreSQL: the triggers announce committed changes (and only
 * committed ones) to the tables the fleet board reads, to memberships/shops and to users; the
 * feed recovers from a lost connection; and the board cache built on it shows a change on the
 * first request after the change's notification.
 */
const knex: Knex = testDb();
const appName = `change-feed-test-${uniqueSuffix()}`;
let feed: ChangeFeed;
let shop: ProvisionedShop;
const heard: ChangeMessage[] = [];

const until = async (what: string, ok: () => boolean, ms = 5000) => {
	const end = Date.now() + ms;
	while (!ok()) {
		if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
		await new Promise((r) => setTimeout(r, 10));
	}
};
/**
 * What the feed heard about this test's shop or user while `write` ran (other test files write
 * to the same database at the same time; their messages are left out). sync() before and after
 * brackets the write: every message committed before it has arrived when sync() returns.
 */
async function hear(write: () => Promise<unknown>, about: RegExp): Promise<string[]> {
	await feed.sync();
	heard.length = 0;
	await write();
	await feed.sync();
	return heard.flatMap((m) => (m.kind === 'change' && about.test(m.payload) ? [m.payload] : []));
}
const ours = () => new RegExp(`^board:${shop.schemaName}$`);

beforeAll(async () => {
	const url = new URL(config.databaseUrl);
	url.searchParams.set('application_name', appName);
	feed = createChangeFeed(url.toString());
	feed.subscribe((m) => heard.push(m));
	shop = await provisionShop(knex, { name: 'Feed Test', slug: `feed-${uniqueSuffix()}` });
	await until('the feed to listen', () => feed.live);
});
afterAll(async () => {
	await feed.stop();
	await knex.destroy();
});

describe('change notifications (real PostgreSQL)', () => {
	it('every table the board reads announces a committed statement as board:<schema>', async () => {
		for (const table of BOARD_TABLES) {
			// A statement-level trigger fires even when no row matches: this proves it is there.
			const got = await hear(
				() => withShop(shop, (trx) => trx.raw('delete from ?? where false', [table]), knex),
				ours()
			);
			expect(got, table).toEqual([`board:${shop.schemaName}`]);
		}
	});

	it('the board reads no table that does not announce its changes', async () => {
		const sql: string[] = [];
		const onQuery = (q: { sql: string }) => sql.push(q.sql);
		knex.on('query', onQuery);
		try {
			await withShop(shop, (trx) => fleetBoard(trx), knex);
		} finally {
			knex.off('query', onQuery);
		}
		const read = new Set(
			Array.from(sql.join('\n').matchAll(/\b(?:from|join)\s+"?([a-z_]+)"?/gi), (m) => m[1]).filter(
				(t) => t !== 'ref' // the CTE's own name
			)
		);
		const { rows } = await knex.raw(
			`select distinct c.relname from pg_trigger t
			join pg_class c on c.oid = t.tgrelid join pg_namespace n on n.oid = c.relnamespace
			join pg_proc p on p.oid = t.tgfoid
			where n.nspname = ? and p.proname = 'notify_board_change'`,
			[shop.schemaName]
		);
		const announcing = rows.map((r: { relname: string }) => r.relname).sort();
		expect([...read].sort()).toEqual(announcing);
	});

	it('says nothing about a transaction that rolled back, and one message per transaction', async () => {
		const got = await hear(async () => {
			await withShop(
				shop,
				async (trx) => {
					await trx('machines').insert({
						name: 'Ghost',
						units: 'inch',
						z_travel: 20,
						resolution: 0.0001
					});
					throw new Error('roll back');
				},
				knex
			).catch(() => {});
			await withShop(
				shop,
				async (trx) => {
					for (const name of ['Feed Mill A', 'Feed Mill B'])
						await trx('machines').insert({ name, units: 'inch', z_travel: 20, resolution: 0.0001 });
				},
				knex
			);
		}, ours());
		expect(got).toEqual([`board:${shop.schemaName}`]);
	});

	it('announces memberships/shops changes and user changes', async () => {
		const email = `feed-${uniqueSuffix()}@feed.example`;
		const [u] = await knex('public.users').insert({ email, name: 'Feed User' }).returning('id');
		expect(
			await hear(
				() =>
					knex('public.memberships').insert({ user_id: u.id, shop_id: shop.id, role: 'operator' }),
				/^memberships$/
			)
		).toContain('memberships'); // other test files may change memberships at the same time
		expect(
			await hear(
				() => knex('public.shops').where({ id: shop.id }).update({ name: 'Feed Test 2' }),
				/^memberships$/
			)
		).toContain('memberships');
		// The shop→server map too: a move's read-only flag and new server reach every node at once.
		expect(
			await hear(
				() =>
					knex('public.shop_servers')
						.where({ shop_id: shop.id })
						.update({ updated_at: knex.fn.now() }),
				/^memberships$/
			)
		).toContain('memberships');
		expect(
			await hear(
				() => knex('public.users').where({ id: u.id }).update({ name: 'Renamed' }),
				new RegExp(`^user:${u.id}$`)
			)
		).toEqual([`user:${u.id}`]);
		// TRUNCATE is not row-level: the triggers that watch it say so by statement.
		// (information_schema.triggers leaves TRUNCATE out; pg_trigger's type bit 32 is TRUNCATE.)
		const { rows } = await knex.raw(
			`select distinct c.relname from pg_trigger t
			join pg_class c on c.oid = t.tgrelid join pg_namespace n on n.oid = c.relnamespace
			where n.nspname = 'public' and (t.tgtype & 32) <> 0`
		);
		const truncateTriggers = rows.map((r: { relname: string }) => r.relname);
		expect([...truncateTriggers].sort()).toEqual(['memberships', 'shop_servers', 'shops', 'users']);
	});

	it('after losing its connection says reset, is not live, and comes back listening', async () => {
		heard.length = 0;
		await knex.raw(
			'select pg_terminate_backend(pid) from pg_stat_activity where application_name = ?',
			[appName]
		);
		await until('a reset', () => heard.some((m) => m.kind === 'reset'));
		await until('the feed to listen again', () => feed.live, 10_000);
		const got = await hear(
			() => withShop(shop, (trx) => trx.raw('delete from findings where false'), knex),
			ours()
		);
		expect(got).toEqual([`board:${shop.schemaName}`]);
	});
});

describe('board cache on the change feed (real PostgreSQL)', () => {
	it('serves the stored board until a finding is added, then the board with it', async () => {
		const cache = createBoardCache<Uint8Array<ArrayBuffer>>({ feed });
		let builds = 0;
		const build = async () => {
			builds++;
			return new TextEncoder().encode(
				JSON.stringify(await withShop(shop, (trx) => fleetBoard(trx), knex))
			);
		};
		const read = async () =>
			JSON.parse(new TextDecoder().decode(await cache.get(shop.schemaName, build)));
		const before = await read();
		const again = await read();
		expect(again).toEqual(before);
		expect(builds).toBe(1);

		const machine = before.machines.find((m: { name: string }) => m.name === 'Feed Mill A');
		expect(machine.findings.stop).toBe(0);
		await withShop(
			shop,
			(trx) =>
				trx('findings').insert({
					key: `feed-test-${uniqueSuffix()}`,
					machine_id: machine.id,
					kind: 'implausible-tool',
					severity: 'stop',
					subject_type: 'tool',
					subject: 'H1',
					message: 'test finding'
				}),
			knex
		);
		await feed.sync();
		const after = await read();
		expect(builds).toBe(2);
		expect(after.machines.find((m: { id: number }) => m.id === machine.id).findings.stop).toBe(1);
	});
});

/**
 * A TCP proxy to PostgreSQL that can go silent: connections stay open but nothing passes —
 * what a dead peer or a broken network path looks like to the client.
 */
async function silenceableProxy(target: URL) {
	let silent = false;
	const sockets = new Set<Socket>();
	const server: Server = createServer((client) => {
		const upstream = new Socket();
		upstream.connect(Number(target.port || 5432), target.hostname);
		for (const s of [client, upstream]) {
			sockets.add(s);
			s.on('error', () => {});
			s.on('close', () => sockets.delete(s));
		}
		client.on('data', (d) => silent || upstream.write(d));
		upstream.on('data', (d) => silent || client.write(d));
		client.on('close', () => upstream.destroy());
		upstream.on('close', () => client.destroy());
	});
	await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
	const url = new URL(target.toString());
	url.hostname = '127.0.0.1';
	url.port = String((server.address() as AddressInfo).port);
	url.searchParams.set('application_name', `${appName}-proxied`);
	return {
		url: url.toString(),
		silence: (v: boolean) => (silent = v),
		close: async () => {
			for (const s of sockets) s.destroy();
			await new Promise<void>((r) => server.close(() => r()));
		}
	};
}

describe('a connection that stops delivering (real PostgreSQL behind a proxy)', () => {
	it('is caught by the heartbeat: reset, not live, then listening again once the path is back', async () => {
		const proxy = await silenceableProxy(new URL(config.databaseUrl));
		const quiet = createChangeFeed(proxy.url, {
			heartbeatMs: 100,
			heartbeatTimeoutMs: 300,
			connectTimeoutMs: 500
		});
		const got: ChangeMessage[] = [];
		quiet.subscribe((m) => got.push(m));
		try {
			await until('the proxied feed to listen', () => quiet.live);
			got.length = 0;
			proxy.silence(true);
			await until(
				'the heartbeat to notice',
				() => !quiet.live && got.some((m) => m.kind === 'reset')
			);
			// sync() on a feed that is not live returns at once instead of waiting.
			const t = Date.now();
			await quiet.sync(5000);
			expect(Date.now() - t).toBeLessThan(100);
			proxy.silence(false);
			await until('the proxied feed to listen again', () => quiet.live, 10_000);
			await withShop(shop, (trx) => trx.raw('delete from setups where false'), knex);
			await until('a change through the new connection', () =>
				got.some((m) => m.kind === 'change' && m.payload === `board:${shop.schemaName}`)
			);
		} finally {
			await quiet.stop();
			await proxy.close();
		}
	}, 20_000);
});
