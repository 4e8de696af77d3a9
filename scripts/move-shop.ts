/**
 * `npm run shop:move -- --shop <slug> --to <server>`: moves one shop's schema to another
 * PostgreSQL server named in DATABASE_SERVERS (docs/DEPLOYMENT.md, "Moving a shop"). Logs in as
 * DATABASE_URL (the superuser or a DBA role) at home and as DATABASE_SERVERS_ADMIN (else
 * DATABASE_SERVERS) elsewhere. Safe to run again after a failure: before the switch a failure
 * puts everything back; after it, a re-run finishes the last steps.
 */
import { parseArgs } from 'node:util';
import { config } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { HOME_SERVER } from '$lib/server/db/servers';
import { explainDbError, exitWith, guardDatabaseUrl } from '$lib/server/cli/guard';
import { moveShop } from '$lib/server/shops/move';

const { values } = parseArgs({
	options: {
		shop: { type: 'string' },
		to: { type: 'string' },
		'allow-remote-db': { type: 'boolean' }
	}
});
if (!values.shop || !values.to)
	exitWith('usage: npm run shop:move -- --shop <slug> --to <server name from DATABASE_SERVERS>');
const to = values.to;
if (to !== HOME_SERVER && !config.databaseServersAdmin[to])
	exitWith(
		`--to "${to}": no such database server; DATABASE_SERVERS names ${Object.keys(config.databaseServers).join(', ') || 'none'} (and "home")`
	);

const url = guardDatabaseUrl();
const home = createDb(url);
const started = Date.now();
try {
	const result = await moveShop({
		slug: values.shop,
		to,
		home,
		adminUrl: (server) => (server === HOME_SERVER ? url : config.databaseServersAdmin[server]),
		log: (m) =>
			console.log(`datumkeep shop:move [${((Date.now() - started) / 1000).toFixed(1)} s] ${m}`)
	});
	if (result.outcome === 'moved')
		console.log(
			`datumkeep: shop ${values.shop} is on "${result.to}".` +
				(result.keptAs && result.keptAs !== '(already gone)'
					? ` The old copy is ${result.keptAs} on "${result.from}": drop it (drop schema … cascade) once you no longer want it.`
					: '')
		);
} catch (e) {
	exitWith(`shop:move failed: ${explainDbError(e)}`);
} finally {
	await home.destroy();
}
