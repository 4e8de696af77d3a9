import type { Knex } from 'knex';
import { migrateShopSchema } from '../db/migrate';
import { OWNER_ROLE } from '../db/roles';
import { HOME_SERVER } from '../db/servers';
import { shopSchemaName } from '../db/schema-name';
import { requireShopToken } from '../db/shop-token';

export interface NewShop {
	name: string;
	slug: string;
	timeZone?: string;
}

export interface ProvisionedShop {
	id: number;
	slug: string;
	name: string;
	schemaName: string;
}

/**
 * Creates a shop: its row in `public.shops`, its own schema `shop_<id>` with every shop
 * migration, and whatever `inside` adds (the owner's membership, say) — all in one
 * transaction. PostgreSQL's DDL is transactional, so if any step fails nothing is left behind:
 * no row, no schema.
 */
export async function provisionShop(
	knex: Knex | Knex.Transaction,
	shop: NewShop,
	inside?: (trx: Knex.Transaction, created: ProvisionedShop) => Promise<void>
): Promise<ProvisionedShop> {
	return knex.transaction(async (trx) => {
		const [row] = await trx('shops')
			.insert({ name: shop.name, slug: shop.slug, time_zone: shop.timeZone ?? 'UTC' })
			.returning(['id', 'slug', 'name']);
		const id = Number(row.id);
		const schemaName = shopSchemaName(id);
		await trx('shops').where({ id }).update({ schema_name: schemaName });
		// New shops start on the home server (public.shop_servers; npm run shop:move moves one).
		await trx('shop_servers').insert({ shop_id: id, server: HOME_SERVER });
		// The app role may not create schemas or own tables: the owner role makes the schema and
		// the shop's role, the migrations run, then everything is handed to the owner role and
		// the shop's role gets its grants (migrations/public/…_create_shop_provisioning_functions).
		// …and keeps the SHA-256 of the shop's token, the key to its row-level security
		// (db/shop-token.ts). A bound parameter: the token never appears in the query text.
		await trx.raw('select public.dk_begin_shop_schema(?, ?)', [
			schemaName,
			requireShopToken(schemaName)
		]);
		const { rows } = await trx.raw("select current_setting('is_superuser') = 'on' as superuser");
		// A superuser (the seed script, tests) creates as the owner role, never as itself.
		if (rows[0].superuser) await trx.raw('set local role ??', [OWNER_ROLE]);
		await migrateShopSchema(trx, schemaName);
		if (rows[0].superuser) await trx.raw('set local role none');
		await trx.raw('select public.dk_seal_shop_schema(?)', [schemaName]);
		const created: ProvisionedShop = { id, slug: row.slug, name: row.name, schemaName };
		if (inside) await inside(trx, created);
		return created;
	});
}
