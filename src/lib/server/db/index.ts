import knex, { type Knex } from 'knex';
import { config } from '../config';

export type Db = Knex;
export type Tx = Knex | Knex.Transaction;

let instance: Knex | undefined;

/**
 * The process's one Knex instance (one pool). Shop data is only reached through
 * `withShop` in ./tenant, which sets the search path to the shop's own schema.
 */
export function db(): Knex {
	instance ??= createDb(config.databaseUrl);
	return instance;
}

export function createDb(url: string): Knex {
	return knex({
		client: 'pg',
		connection: url,
		pool: { min: 0, max: Number(process.env.DATABASE_POOL_MAX ?? 10) },
		log: {
			// The caller reports connection failures in its own words; Knex's copy is a stack trace.
			warn(message: unknown) {
				if (!/Acquire connection error/.test(String(message))) console.warn(message);
			}
		}
	});
}

export async function closeDb(): Promise<void> {
	if (instance) {
		const k = instance;
		instance = undefined;
		await k.destroy();
	}
}
