import type { Knex } from 'knex';
import { assertShopSchema } from './schema-name';
import { shopToken } from './shop-token';

/**
 * Least-privilege PostgreSQL roles (issue 13; docs/SECURITY.md):
 * - `datumkeep_owner` owns every table, trigger and function; migrations run as it. Not a
 *   superuser; it may create roles (one per shop).
 * - `datumkeep_app` is what the app and the worker log in as. It owns nothing, so it cannot
 *   ALTER or DROP a table or trigger (the append-only triggers stay on), cannot set
 *   `session_replication_role` (superuser only), and by itself reaches no shop table at all.
 * - one role per shop, `<database>__shop_<id>`: DML on that shop's schema only (no UPDATE,
 *   DELETE or TRUNCATE on append-only tables). `withShop` switches to it for the transaction
 *   (`SET LOCAL ROLE`), so a query inside a shop's transaction that names another shop's schema
 *   is refused by PostgreSQL. (A superuser session — scripts, integration tests — is left as
 *   it is; tests/integration/db-roles.test.ts logs in as the app role.)
 * - the app role may still `SET ROLE` to any shop's role, so every shop table has a second
 *   lock: row-level security that opens only for the shop's token (db/shop-token.ts), which
 *   enterShop sets beside the role and SQL cannot forge.
 * - `datumkeep_shop`: what every shop role may do in `public`.
 * Created by scripts/db-roles.ts (run by npm start and npm test as the superuser).
 */
export const OWNER_ROLE = 'datumkeep_owner';
export const APP_ROLE = 'datumkeep_app';
export const SHOP_GROUP = 'datumkeep_shop';

/** The shop's role: the database name keeps two databases on one server apart. */
export function shopRoleName(database: string, schemaName: string): string {
	assertShopSchema(schemaName);
	if (!/^[a-z_][a-z0-9_]*$/.test(database))
		throw new Error(`not a plain database name: ${database}`);
	return `${database}__${schemaName}`;
}

/** The database a Knex instance or transaction is connected to (from its connection URL). */
export function databaseOf(k: Knex | Knex.Transaction): string {
	const conn = (k as unknown as { client: { config: { connection: unknown } } }).client.config
		.connection;
	const url =
		typeof conn === 'string' ? conn : (conn as { connectionString?: string }).connectionString;
	if (url) return decodeURIComponent(new URL(url).pathname.slice(1));
	const db = (conn as { database?: string }).database;
	if (!db) throw new Error('cannot tell which database this connection uses');
	return db;
}

/**
 * Makes the rest of this transaction act as the shop: its role and its schema first on the
 * search path. Every shop-scoped transaction goes through here (withShop and the few
 * transactions that also write `public`).
 */
export async function enterShop(trx: Knex.Transaction, schemaName: string): Promise<void> {
	const role = shopRoleName(databaseOf(trx), schemaName);
	// The app role (never a superuser) always becomes the shop's role. A superuser session (the
	// seed script, integration tests that inject faults with their own DDL) keeps its rights.
	// The token opens the shop's row-level security (db/shop-token.ts); with no AUTH_SECRET it
	// is empty and the shop's tables refuse the app role with a message saying so. Always a
	// bound parameter: the query text (visible to other sessions of the app role in
	// pg_stat_activity) must never hold it. Transaction-local, like the role.
	await trx.raw(
		`select set_config('datumkeep.shop_token', ?, true),
			(select set_config('role', ?, true) where current_setting('is_superuser') = 'off')`,
		[shopToken(schemaName) ?? '', role]
	);
	await trx.raw('set local search_path to ??, public', [schemaName]);
}

/** Back to the login role and `public` for the rest of the transaction. */
export async function leaveShop(trx: Knex.Transaction): Promise<void> {
	await trx.raw('set local role none');
	await trx.raw("select set_config('datumkeep.shop_token', '', true)");
	await trx.raw('set local search_path to public');
}
