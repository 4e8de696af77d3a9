import type { Knex } from 'knex';
import { publicMigrations } from '$migrations/public/index';
import { shopMigrations } from '$migrations/shop/index';
import { assertShopSchema } from './schema-name';
import { requireShopToken } from './shop-token';

/** Feeds Knex's migrator from a static list, so the same code runs under tsx and in the build. */
function staticSource(list: Record<string, Knex.Migration>): Knex.MigrationSource<string> {
	return {
		getMigrations: async () => Object.keys(list).sort(),
		getMigrationName: (name) => name,
		getMigration: async (name) => list[name]
	};
}

/** Migrates the `public` schema (shops, users, memberships, …). Returns the names it ran. */
export async function migratePublic(knex: Knex): Promise<string[]> {
	const [, ran] = await knex.migrate.latest({
		migrationSource: staticSource(publicMigrations),
		schemaName: 'public'
	});
	return ran as string[];
}

/**
 * Creates (if needed) and migrates one shop schema inside the caller's transaction, so the
 * caller decides whether it commits together with, say, the new shop's row. Each schema keeps
 * its own knex_migrations table.
 */
export async function migrateShopSchema(trx: Knex.Transaction, schema: string): Promise<string[]> {
	assertShopSchema(schema);
	// At sign-up the schema exists already (dk_begin_shop_schema, as the owner role); the app
	// role may not create schemas, so look before creating.
	const { rows } = await trx.raw('select 1 from pg_namespace where nspname = ?', [schema]);
	if (rows.length === 0) await trx.raw('create schema ??', [schema]);
	await trx.raw('set local search_path to ??, public', [schema]);
	const [, ran] = await trx.migrate.latest({
		migrationSource: staticSource(shopMigrations),
		schemaName: schema
	});
	await trx.raw('set local search_path to public');
	return ran as string[];
}

/**
 * Migrates `public`, then every shop schema, each in its own transaction — on the server that
 * holds it (public.shop_servers). `servers` gives the connection for a server other than home;
 * a shop on a server it does not give is left alone and listed in `skipped` (never re-made at
 * home: its schema lives elsewhere).
 */
export async function migrateAll(
	knex: Knex,
	servers: (name: string) => Knex | undefined = () => undefined
): Promise<{ public: string[]; shops: Record<string, string[]>; skipped: string[] }> {
	const pub = await migratePublic(knex);
	const shops: Record<string, string[]> = {};
	const skipped: string[] = [];
	const rows: { schema_name: string; server: string | null }[] = await knex('shops as s')
		.leftJoin('shop_servers as ss', 'ss.shop_id', 's.id')
		.whereNotNull('s.schema_name')
		.select('s.schema_name', 'ss.server')
		.orderBy('s.id');
	for (const { schema_name, server } of rows) {
		const on = !server || server === 'home' ? knex : servers(server);
		if (!on) {
			skipped.push(`${schema_name} (on ${server})`);
			continue;
		}
		shops[schema_name] = await on.transaction(async (trx) => {
			const ran = await migrateShopSchema(trx, schema_name);
			// New tables get the shop role's grants (append-only ones without UPDATE/DELETE) and
			// the row-level security keyed by the shop's token.
			await trx.raw('select public.dk_seal_shop_schema(?)', [schema_name]);
			await keyShopSchema(trx, schema_name);
			return ran;
		});
	}
	return { public: pub, shops, skipped };
}

/**
 * Stores the SHA-256 of the shop's token (db/shop-token.ts) for its row-level security. Every
 * migrate re-keys every schema, so schemas made before the keys existed get one, and a changed
 * AUTH_SECRET takes effect at the next migrate. Only the owner role (or a superuser) may write
 * the keys; the token goes as a bound parameter, never into the query text.
 */
export async function keyShopSchema(trx: Knex.Transaction, schema: string): Promise<void> {
	await trx.raw(
		`insert into public.dk_shop_keys (schema_name, token_hash)
		values (?, sha256(convert_to(?, 'UTF8')))
		on conflict (schema_name) do update set token_hash = excluded.token_hash, keyed_at = now()
		where dk_shop_keys.token_hash <> excluded.token_hash`,
		[schema, requireShopToken(schema)]
	);
}

export const migrationNames = {
	public: () => Object.keys(publicMigrations).sort(),
	shop: () => Object.keys(shopMigrations).sort()
};
