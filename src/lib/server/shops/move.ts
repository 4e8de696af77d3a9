import { execFile } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import type { Knex } from 'knex';
import { createDb } from '../db';
import { keyShopSchema } from '../db/migrate';
import { databaseOf, OWNER_ROLE, shopRoleName } from '../db/roles';
import { assertShopSchema } from '../db/schema-name';
import { HOME_SERVER } from '../db/servers';

const run = promisify(execFile);

/**
 * Moving one shop's schema to another PostgreSQL server (`npm run shop:move`; docs/DEPLOYMENT.md,
 * "Moving a shop"). The shop is read-only for the few minutes it takes; every other shop carries
 * on. Until the map is switched, any failure puts everything back as it was (the shop on its
 * old server, writable; nothing left on the target), so a move can simply be run again.
 */
export type MoveStep =
	| 'read-only'
	| 'drained'
	| 'dumped'
	| 'restored'
	| 'verified'
	| 'switched'
	| 'source-kept'
	| 'writable';

export interface MoveOptions {
	slug: string;
	/** The target server's name (DATABASE_SERVERS). */
	to: string;
	/** The home server as a superuser (or DBA role): public.shops and public.shop_servers. */
	home: Knex;
	/** A superuser URL for each server by name (`home` too): pg_dump, psql and the grants. */
	adminUrl: (server: string) => string | undefined;
	log?: (message: string) => void;
	/** Called after each step; the integration test throws here to fail a move midway. */
	afterStep?: (step: MoveStep) => Promise<void> | void;
	/** How long to wait for the shop's running transactions to end (default 60 s). */
	drainTimeoutMs?: number;
}

export interface MoveResult {
	outcome: 'moved' | 'already-there';
	shopId: number;
	schema: string;
	from: string;
	to: string;
	/** The old copy on the source server, renamed (drop it by hand once no longer wanted). */
	keptAs?: string;
	/** Rows per table, equal on both sides. */
	rows?: Record<string, number>;
}

export class MoveError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'MoveError';
	}
}

/** The PostgreSQL client programs, newest Debian version first, else from PATH. */
function pgBin(name: 'pg_dump' | 'psql'): string {
	const root = '/usr/lib/postgresql';
	if (existsSync(root)) {
		const versions = readdirSync(root)
			.filter((v) => /^\d+$/.test(v))
			.sort((a, b) => Number(b) - Number(a));
		for (const v of versions) {
			const path = join(root, v, 'bin', name);
			if (existsSync(path)) return path;
		}
	}
	return name;
}

/** A URL with its password hidden, for the log. */
const shown = (url: string) => url.replace(/(\/\/[^:/@]*:)[^@]*@/, '$1***@');

async function schemaExists(k: Knex, schema: string): Promise<boolean> {
	const { rows } = await k.raw('select 1 from pg_namespace where nspname = ?', [schema]);
	return rows.length > 0;
}

async function tablesOf(k: Knex, schema: string): Promise<string[]> {
	const { rows } = await k.raw(
		`select c.relname from pg_class c join pg_namespace n on n.oid = c.relnamespace
		where n.nspname = ? and c.relkind in ('r', 'p') order by 1`,
		[schema]
	);
	return rows.map((r: { relname: string }) => r.relname);
}

async function rowCounts(k: Knex, schema: string, tables: string[]) {
	const counts: Record<string, number> = {};
	for (const t of tables) {
		const { rows } = await k.raw('select count(*)::bigint as n from ??.??', [schema, t]);
		counts[t] = Number(rows[0].n);
	}
	return counts;
}

/** Every user trigger of the schema as `table.trigger`, sorted. */
async function triggersOf(k: Knex, schema: string): Promise<string[]> {
	const { rows } = await k.raw(
		`select c.relname || '.' || t.tgname as name from pg_trigger t
		join pg_class c on c.oid = t.tgrelid join pg_namespace n on n.oid = c.relnamespace
		where n.nspname = ? and not t.tgisinternal order by 1`,
		[schema]
	);
	return rows.map((r: { name: string }) => r.name);
}

/** The shop's role may no longer write (reads go on); running writers are waited for next. */
async function withdrawWrites(k: Knex, schema: string): Promise<void> {
	const role = shopRoleName(databaseOf(k), schema);
	await k.raw('revoke insert, update, delete, truncate on all tables in schema ?? from ??', [
		schema,
		role
	]);
}

/** The shop's role gets its usual grants back (the same function sign-up and migrate use). */
async function restoreWrites(k: Knex, schema: string): Promise<void> {
	await k.raw('select public.dk_seal_shop_schema(?)', [schema]);
}

/**
 * Waits until no transaction that wrote to the shop is still open: SHARE locks conflict with
 * the ROW EXCLUSIVE lock every writer holds until it ends, and not with readers.
 */
async function drain(k: Knex, schema: string, tables: string[], timeoutMs: number): Promise<void> {
	await k.transaction(async (trx) => {
		await trx.raw(`set local lock_timeout = '${Math.max(1, Math.round(timeoutMs))}ms'`);
		for (const t of tables) await trx.raw('lock table ??.?? in share mode', [schema, t]);
	});
}

async function dropSchema(k: Knex, schema: string): Promise<void> {
	await k.raw('drop schema if exists ?? cascade', [schema]);
}

/** Moves one shop's schema to the server `to`. See {@link MoveOptions}. */
export async function moveShop(o: MoveOptions): Promise<MoveResult> {
	const log = o.log ?? (() => {});
	const step = async (name: MoveStep, detail: string) => {
		log(`${name}: ${detail}`);
		await o.afterStep?.(name);
	};
	const shop = await o
		.home('public.shops as s')
		.leftJoin('public.shop_servers as ss', 'ss.shop_id', 's.id')
		.where('s.slug', o.slug)
		.first('s.id', 's.schema_name', 'ss.server', 'ss.moving_to', 'ss.moved_from');
	if (!shop) throw new MoveError(`no shop with the slug "${o.slug}"`);
	if (!shop.schema_name)
		throw new MoveError(`shop "${o.slug}" has no schema (it was deleted); nothing to move`);
	const shopId = Number(shop.id);
	const schema: string = shop.schema_name;
	assertShopSchema(schema);
	const from: string = shop.server ?? HOME_SERVER;
	const to = o.to;
	const base = { shopId, schema, from, to };

	// One move of a shop at a time: a transaction-scoped advisory lock held at home for the
	// whole run (ended by commit below, or by PostgreSQL if this process dies).
	const claim = await o.home.transaction();
	const { rows: got } = await claim.raw('select pg_try_advisory_xact_lock(hashtext(?), ?) as ok', [
		'datumkeep shop:move',
		shopId
	]);
	if (!got[0].ok) {
		await claim.rollback();
		throw new MoveError(`shop "${o.slug}" is already being moved by another run`);
	}

	const pools: Knex[] = [];
	const connect = (server: string): Knex => {
		if (server === HOME_SERVER) return o.home;
		const url = o.adminUrl(server);
		if (!url)
			throw new MoveError(
				`no connection for database server "${server}": name it in DATABASE_SERVERS (and DATABASE_SERVERS_ADMIN)`
			);
		const k = createDb(url);
		pools.push(k);
		return k;
	};
	const setMap = (values: Record<string, unknown>) =>
		o
			.home('public.shop_servers')
			.insert({ shop_id: shopId, server: from, ...values, updated_at: o.home.fn.now() })
			.onConflict('shop_id')
			.merge();

	try {
		if (from === to) {
			// Already there. A run that stopped after switching the map finishes here.
			if (shop.moving_to) {
				const keptAs = shop.moved_from
					? await keepSource(connect(shop.moved_from), schema, log)
					: undefined;
				await setMap({ server: to, moving_to: null, moving_since: null });
				log(`writable: shop ${o.slug} is writable again on "${to}"`);
				return { outcome: 'moved', ...base, from: shop.moved_from ?? from, keptAs };
			}
			log(`shop ${o.slug} is already on "${to}"; nothing to do`);
			return { outcome: 'already-there', ...base };
		}
		const fromUrl = from === HOME_SERVER ? o.adminUrl(HOME_SERVER) : o.adminUrl(from);
		const toUrl = o.adminUrl(to);
		if (!toUrl)
			throw new MoveError(
				`no connection for database server "${to}": name it in DATABASE_SERVERS (and DATABASE_SERVERS_ADMIN)`
			);
		if (!fromUrl) throw new MoveError(`no connection for database server "${from}"`);
		const src = connect(from);
		const dst = connect(to);
		log(`moving shop ${o.slug} (${schema}) from "${from}" to "${to}" (${shown(toUrl)})`);

		let rows: Record<string, number> = {};
		try {
			// The target must be a Datumkeep database: roles and the public migrations in place.
			const ready = await dst.raw(
				`select to_regprocedure('public.dk_seal_shop_schema(text)') is not null as sealed,
				exists (select 1 from pg_roles where rolname = ?) as owner`,
				[OWNER_ROLE]
			);
			if (!ready.rows[0].sealed || !ready.rows[0].owner)
				throw new MoveError(
					`server "${to}" is not set up: run npm run db:roles and npm run migrate with DATABASE_URL naming it`
				);
			if (await schemaExists(dst, schema)) {
				// Only a failed earlier run leaves one (the map does not point there): start again.
				log(`removing ${schema} left on "${to}" by an earlier run`);
				await dropSchema(dst, schema);
			}

			await setMap({ moving_to: to, moving_since: o.home.fn.now() });
			await withdrawWrites(src, schema);
			await step('read-only', 'writes to the shop are refused until the move ends');

			const tables = await tablesOf(src, schema);
			await drain(src, schema, tables, o.drainTimeoutMs ?? 60_000);
			await step('drained', `no transaction is writing to ${schema} any more`);

			const dir = mkdtempSync(join(tmpdir(), 'datumkeep-move-'));
			try {
				const file = join(dir, `${schema}.sql`);
				// No owners or grants: the target's owner role owns everything and its own shop
				// role (named after the target's database) gets the grants, as at sign-up.
				await run(pgBin('pg_dump'), [
					'--schema',
					schema,
					'--no-owner',
					'--no-privileges',
					'--format',
					'plain',
					'--file',
					file,
					'--dbname',
					fromUrl
				]).catch((e) => {
					throw new MoveError(`pg_dump of ${schema} failed: ${e.stderr || e.message}`);
				});
				await step('dumped', `${schema} written to ${file}`);

				await run(pgBin('psql'), [
					'--no-psqlrc',
					'--quiet',
					'--set',
					'ON_ERROR_STOP=1',
					'--single-transaction',
					'--dbname',
					toUrl,
					'--command',
					`set role ${OWNER_ROLE}`,
					'--file',
					file
				]).catch((e) => {
					throw new MoveError(`restoring ${schema} on "${to}" failed: ${e.stderr || e.message}`);
				});
			} finally {
				rmSync(dir, { recursive: true, force: true });
			}
			await restoreWrites(dst, schema);
			// The second lock (row-level security keyed per shop, migrations 20261231…): the target
			// must know the shop's key, or its tables open to no one.
			await dst.transaction((trx) => keyShopSchema(trx, schema));
			await step('restored', `${schema} on "${to}", with the shop's role and its grants`);

			rows = await verify(src, dst, schema, tables);
			const total = Object.values(rows).reduce((a, b) => a + b, 0);
			await step('verified', `${tables.length} tables, ${total} rows equal; triggers present`);
		} catch (e) {
			log(`failed before the switch: ${(e as Error).message}; putting everything back`);
			await rollBack(src, dst, schema, setMap, log);
			throw e;
		}

		// From here the target holds the shop; the map says so, and the old copy is kept aside.
		await setMap({ server: to, moved_from: from });
		await step('switched', `public.shop_servers sends shop ${o.slug} to "${to}"`);
		const keptAs = await keepSource(src, schema, log);
		await step('source-kept', `the old copy on "${from}" is ${keptAs}`);
		await setMap({ server: to, moving_to: null, moving_since: null });
		await step('writable', `shop ${o.slug} is writable again, on "${to}"`);
		return { outcome: 'moved', ...base, keptAs, rows };
	} finally {
		await Promise.all(pools.map((k) => k.destroy()));
		await claim.commit().catch(() => {});
	}
}

/** Row counts per table equal, the same triggers, and the append-only ones in force. */
async function verify(
	src: Knex,
	dst: Knex,
	schema: string,
	tables: string[]
): Promise<Record<string, number>> {
	const dstTables = await tablesOf(dst, schema);
	if (dstTables.join() !== tables.join())
		throw new MoveError(
			`tables differ: source ${tables.join(', ')}; target ${dstTables.join(', ')}`
		);
	const [a, b] = [await rowCounts(src, schema, tables), await rowCounts(dst, schema, tables)];
	const differ = tables.filter((t) => a[t] !== b[t]);
	if (differ.length)
		throw new MoveError(
			`row counts differ: ${differ.map((t) => `${t} ${a[t]} → ${b[t]}`).join(', ')}`
		);
	const [ta, tb] = [await triggersOf(src, schema), await triggersOf(dst, schema)];
	if (ta.join() !== tb.join())
		throw new MoveError(
			`triggers differ: missing on the target ${ta.filter((t) => !tb.includes(t)).join(', ') || 'none'}`
		);
	const appendOnly = tb.filter((t) => t.endsWith('_append_only'));
	if (appendOnly.length === 0) throw new MoveError('no append-only triggers on the target');
	// The shop's role on the target may add rows but never change those of the tables that
	// refuse changes outright (the rule dk_seal_shop_schema grants by).
	const role = shopRoleName(databaseOf(dst), schema);
	const { rows: refusing } = await dst.raw(
		`select distinct c.relname from pg_trigger t join pg_class c on c.oid = t.tgrelid
		join pg_namespace n on n.oid = c.relnamespace join pg_proc p on p.oid = t.tgfoid
		where n.nspname = ? and p.proname = 'refuse_change' and t.tgname like '%_append_only'`,
		[schema]
	);
	for (const { relname } of refusing as { relname: string }[]) {
		const { rows } = await dst.raw(
			`select has_table_privilege(?, ?, 'INSERT') as ins, has_table_privilege(?, ?, 'UPDATE') as upd`,
			[role, `${schema}.${relname}`, role, `${schema}.${relname}`]
		);
		if (!rows[0].ins || rows[0].upd)
			throw new MoveError(`grants on ${relname} on the target are not the append-only ones`);
	}
	return b;
}

/** Before the switch: nothing on the target, the shop writable on its source again. */
async function rollBack(
	src: Knex,
	dst: Knex,
	schema: string,
	setMap: (v: Record<string, unknown>) => Promise<unknown>,
	log: (m: string) => void
): Promise<void> {
	const attempt = async (what: string, fn: () => Promise<unknown>) => {
		try {
			await fn();
			log(`rolled back: ${what}`);
		} catch (e) {
			log(`could not ${what}: ${(e as Error).message} (run the move again to finish)`);
		}
	};
	await attempt(`dropped ${schema} on the target`, () => dropSchema(dst, schema));
	await attempt(`grants on the source restored`, () => restoreWrites(src, schema));
	await attempt('shop writable again', () => setMap({ moving_to: null, moving_since: null }));
}

/**
 * The source's copy is renamed, not dropped: `shop_<id>_moved_<yyyymmddhhmm>`, out of the app's
 * reach (not a shop schema name) and kept until someone drops it (docs/DEPLOYMENT.md).
 */
async function keepSource(src: Knex, schema: string, log: (m: string) => void): Promise<string> {
	if (!(await schemaExists(src, schema))) {
		log(`no ${schema} left on the source`);
		return '(already gone)';
	}
	const stamp = new Date()
		.toISOString()
		.replace(/[^0-9]/g, '')
		.slice(0, 12);
	const keptAs = `${schema}_moved_${stamp}`;
	const role = shopRoleName(databaseOf(src), schema);
	await src.transaction(async (trx) => {
		await trx.raw('alter schema ?? rename to ??', [schema, keptAs]);
		await trx.raw('revoke all on schema ?? from ??', [keptAs, role]);
	});
	return keptAs;
}
