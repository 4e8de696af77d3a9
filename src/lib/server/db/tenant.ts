import { error, isRedirect } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { db } from './index';
import { enterShop } from './roles';
import { assertShopSchema } from './schema-name';
import {
	HOME_SERVER,
	multiServer,
	serverDb,
	shopIsMoving,
	shopServer,
	SHOP_MOVING_MESSAGE
} from './servers';

/** What a shop query needs to know about its shop: which schema holds its data. */
export interface ShopRef {
	id: number;
	schemaName: string;
	/** The database server holding the schema (public.shop_servers); looked up when absent. */
	server?: string;
}

/** PostgreSQL's "insufficient privilege": what a write meets while the shop's grants are withdrawn. */
const INSUFFICIENT_PRIVILEGE = '42501';

/**
 * Runs `fn` in a transaction whose search path is the shop's own schema (then `public`), so
 * `trx('machines')` can only ever mean this shop's machines. This is the only way server code
 * reaches shop tables: a shop query cannot be written without naming the shop.
 *
 * `conn` is the home server's connection; a shop whose schema sits on another server
 * (public.shop_servers, DATABASE_SERVERS) runs on that server's pool instead. While
 * `npm run shop:move` moves the shop, its role may not write: such a refusal becomes a 503
 * with {@link SHOP_MOVING_MESSAGE} (reads still work).
 */
export async function withShop<T>(
	shop: ShopRef,
	fn: (trx: Knex.Transaction) => Promise<T>,
	conn: Knex = db(),
	/** e.g. a consistent read-only snapshot for an export (set before the first query). */
	options?: Pick<Knex.TransactionConfig, 'isolationLevel' | 'readOnly'>
): Promise<T> {
	assertShopSchema(shop.schemaName);
	const target = multiServer()
		? serverDb(shop.server ?? (await shopServer(conn, shop.id)), conn)
		: conn;
	// SvelteKit's redirect() is thrown; thrown inside the transaction it would roll back the work
	// it is meant to follow. Catch it, commit, and throw it again afterwards.
	let pending: unknown = undefined;
	const result = await target.transaction(async (trx) => {
		// The shop's own role and schema for the whole transaction (db/roles.ts).
		await enterShop(trx, shop.schemaName);
		try {
			return await fn(trx);
		} catch (e) {
			if (isRedirect(e)) {
				pending = e;
				return undefined as T;
			}
			if (
				(e as { code?: string }).code === INSUFFICIENT_PRIVILEGE &&
				(await shopIsMoving(conn, shop.id).catch(() => false))
			)
				error(503, SHOP_MOVING_MESSAGE);
			throw e;
		}
	}, options);
	if (pending !== undefined) throw pending;
	return result;
}

/**
 * The shop part of a transaction that also reads or locks `public` (e.g. the plan gate locks
 * the shop's billing row, then the machine is added). A shop at home runs inside the caller's
 * transaction, as the shop (`enterShop`), so both commit together. A shop on another server
 * runs in a transaction of its own there, committed while the caller's (with its locks) is
 * still open: keep the `public` part to reads and locks before it, so nothing in `public` can
 * fail after the shop's part has committed (docs/DEPLOYMENT.md).
 */
export async function inShop<T>(
	trx: Knex.Transaction,
	shop: ShopRef,
	fn: (trx: Knex.Transaction) => Promise<T>
): Promise<T> {
	assertShopSchema(shop.schemaName);
	const server = multiServer() ? (shop.server ?? (await shopServer(trx, shop.id))) : HOME_SERVER;
	if (server !== HOME_SERVER) return withShop({ ...shop, server }, fn);
	await enterShop(trx, shop.schemaName);
	return fn(trx);
}
