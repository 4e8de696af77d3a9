import type { Knex } from 'knex';
import { migrateShopSchema } from '../db/migrate';
import { shopSchemaName } from '../db/schema-name';

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
		await migrateShopSchema(trx, schemaName);
		const created: ProvisionedShop = { id, slug: row.slug, name: row.name, schemaName };
		if (inside) await inside(trx, created);
		return created;
	});
}
