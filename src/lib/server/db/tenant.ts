import { isRedirect } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { db } from './index';
import { enterShop } from './roles';
import { assertShopSchema } from './schema-name';

/** What a shop query needs to know about its shop: which schema holds its data. */
export interface ShopRef {
	id: number;
	schemaName: string;
}

/**
 * Runs `fn` in a transaction whose search path is the shop's own schema (then `public`), so
 * `trx('machines')` can only ever mean this shop's machines. This is the only way server code
 * reaches shop tables: a shop query cannot be written without naming the shop.
 */
export async function withShop<T>(
	shop: ShopRef,
	fn: (trx: Knex.Transaction) => Promise<T>,
	conn: Knex = db(),
	/** e.g. a consistent read-only snapshot for an export (set before the first query). */
	options?: Pick<Knex.TransactionConfig, 'isolationLevel' | 'readOnly'>
): Promise<T> {
	assertShopSchema(shop.schemaName);
	// SvelteKit's redirect() is thrown; thrown inside the transaction it would roll back the work
	// it is meant to follow. Catch it, commit, and throw it again afterwards.
	let pending: unknown = undefined;
	const result = await conn.transaction(async (trx) => {
		// The shop's own role and schema for the whole transaction (db/roles.ts).
		await enterShop(trx, shop.schemaName);
		try {
			return await fn(trx);
		} catch (e) {
			if (isRedirect(e)) {
				pending = e;
				return undefined as T;
			}
			throw e;
		}
	}, options);
	if (pending !== undefined) throw pending;
	return result;
}
