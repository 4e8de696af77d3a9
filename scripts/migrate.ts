/**
 * `npm run migrate`: migrates `public`, then every shop schema (each tracks its own
 * migrations). Refuses a database that is not on loopback unless told otherwise.
 */
import { createDb } from '$lib/server/db';
import { migrateAll } from '$lib/server/db/migrate';
import { OWNER_ROLE } from '$lib/server/db/roles';
import { explainDbError, exitWith, guardDatabaseUrl } from '$lib/server/cli/guard';

const url = guardDatabaseUrl();
// Logs in as DATABASE_URL (the superuser locally) and migrates as the owner role.
const knex = createDb(url, { role: OWNER_ROLE });
try {
	const result = await migrateAll(knex);
	const shopCount = Object.keys(result.shops).length;
	const shopRan = Object.values(result.shops).reduce((n, r) => n + r.length, 0);
	console.log(
		`datumkeep: migrated public (${result.public.length} new) and ${shopCount} shop schema(s) (${shopRan} new)`
	);
} catch (e) {
	exitWith(`migration failed: ${explainDbError(e)}`);
} finally {
	await knex.destroy();
}
