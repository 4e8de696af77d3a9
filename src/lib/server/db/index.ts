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
	instance ??= createDb(config.appDatabaseUrl);
	return instance;
}

/**
 * @param opts.role a role every connection switches to (`SET ROLE`): the migrate and seed
 *   scripts log in as the superuser but create and write as the owner role (db/roles.ts).
 */
export function createDb(url: string, opts: { role?: string } = {}): Knex {
	const role = opts.role;
	if (role !== undefined && !/^[a-z_][a-z0-9_]*$/.test(role)) throw new Error(`bad role ${role}`);
	return knex({
		client: 'pg',
		connection: url,
		pool: {
			min: 0,
			max: config.databasePoolMax,
			...(role && {
				afterCreate(
					conn: { query: (q: string, cb: (e: Error | null) => void) => void },
					done: (e: Error | null, c: unknown) => void
				) {
					conn.query(`set role "${role}"`, (e) => done(e, conn));
				}
			})
		},
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
