/**
 * `npm run migrate`: migrates `public`, then every shop schema (each tracks its own
 * migrations). Refuses a database that is not on loopback unless told otherwise.
 */
import type { Knex } from 'knex';
import { config } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { migrateAll } from '$lib/server/db/migrate';
import { OWNER_ROLE } from '$lib/server/db/roles';
import { explainDbError, exitWith, guardDatabaseUrl } from '$lib/server/cli/guard';

const url = guardDatabaseUrl();
// Logs in as DATABASE_URL (the superuser locally) and migrates as the owner role.
const knex = createDb(url, { role: OWNER_ROLE });
// Shops moved to other servers (npm run shop:move) are migrated there, as the owner role too.
const others = new Map<string, Knex>();
const onServer = (name: string) => {
	const serverUrl = config.databaseServersAdmin[name];
	if (!serverUrl) return undefined;
	if (!others.has(name)) others.set(name, createDb(serverUrl, { role: OWNER_ROLE }));
	return others.get(name);
};
try {
	const result = await migrateAll(knex, onServer);
	for (const s of result.skipped)
		console.warn(
			`datumkeep: shop schema ${s} not migrated: DATABASE_SERVERS does not name its server`
		);
	const shopCount = Object.keys(result.shops).length;
	const shopRan = Object.values(result.shops).reduce((n, r) => n + r.length, 0);
	console.log(
		`datumkeep: migrated public (${result.public.length} new) and ${shopCount} shop schema(s) (${shopRan} new)`
	);
} catch (e) {
	exitWith(`migration failed: ${explainDbError(e)}`);
} finally {
	await Promise.all([...others.values()].map((k) => k.destroy()));
	await knex.destroy();
}
