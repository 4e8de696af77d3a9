/**
 * `npm run seed`: loads the demo shops into an empty database (does nothing when any shop
 * exists). Refuses a database that is not on loopback unless told otherwise.
 */
import { createDb } from '$lib/server/db';
import { explainDbError, exitWith, guardDatabaseUrl } from '$lib/server/cli/guard';
import { seedDemo } from '../seeds/demo';

const knex = createDb(guardDatabaseUrl());
try {
	const [{ count }] = await knex('shops').count<{ count: string }[]>('id as count');
	if (Number(count) > 0) {
		console.log(`datumkeep: database already has ${count} shop(s); demo seed skipped`);
	} else {
		const result = await seedDemo(knex);
		console.log(`datumkeep: demo seed loaded: ${result.shops.join(', ')}`);
	}
} catch (e) {
	exitWith(`seed failed: ${explainDbError(e)}`);
} finally {
	await knex.destroy();
}
