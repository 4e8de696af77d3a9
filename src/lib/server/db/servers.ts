import type { Knex } from 'knex';
import { config } from '../config';
import { createDb, db } from './index';

/**
 * Shops spread over several PostgreSQL servers (docs/DEPLOYMENT.md, "More than one PostgreSQL
 * server"). `public` lives on the home server (db()); public.shop_servers names the server
 * that holds each shop's schema, and DATABASE_SERVERS gives each other server's URL. One Knex
 * instance (one pool) per server, made on first use.
 */
export const HOME_SERVER = 'home';

const pools = new Map<string, Knex>();

/** True when any other server is configured; otherwise every shop is at home and nothing is looked up. */
export function multiServer(): boolean {
	return Object.keys(config.databaseServers).length > 0;
}

/**
 * The Knex instance for a server. `home` is `home` (by default db()): callers that were
 * handed a connection (the worker, tests, scripts) keep it for shops at home.
 */
export function serverDb(name: string, home: Knex = db()): Knex {
	if (name === HOME_SERVER) return home;
	const found = pools.get(name);
	if (found) return found;
	const url = config.databaseServers[name];
	if (!url)
		throw new Error(
			`shop data is on database server "${name}", which DATABASE_SERVERS does not name (configure it as ${name}=postgres://…)`
		);
	const made = createDb(url);
	pools.set(name, made);
	return made;
}

/** Which server holds the shop's schema (home when the map has no row: shops made before it). */
export async function shopServer(home: Knex | Knex.Transaction, shopId: number): Promise<string> {
	const row = await home('public.shop_servers').where({ shop_id: shopId }).first('server');
	return row?.server ?? HOME_SERVER;
}

/** Closes every other server's pool (shutdown, tests). */
export async function closeServers(): Promise<void> {
	const all = [...pools.values()];
	pools.clear();
	await Promise.all(all.map((k) => k.destroy()));
}

/** What a write to a shop that is being moved is told (HTTP 503: come back shortly). */
export const SHOP_MOVING_MESSAGE =
	'This shop is being moved to another database server; try again in a few minutes.';

/** Whether the shop is read-only because `npm run shop:move` is moving it. */
export async function shopIsMoving(
	home: Knex | Knex.Transaction,
	shopId: number
): Promise<boolean> {
	const row = await home('public.shop_servers').where({ shop_id: shopId }).first('moving_to');
	return !!row?.moving_to;
}
