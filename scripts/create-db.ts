/** Creates the database named in DATABASE_URL when it is missing (`--fresh` drops it first). */
import { createDb } from '$lib/server/db';
import { explainDbError, exitWith, guardDatabaseUrl } from '$lib/server/cli/guard';

const url = new URL(guardDatabaseUrl());
const name = decodeURIComponent(url.pathname.replace(/^\//, ''));
if (!/^[a-z_][a-z0-9_]*$/.test(name))
	exitWith(`database name "${name}" in DATABASE_URL is not a plain name.`);
const adminUrl = new URL(url);
adminUrl.pathname = '/postgres';
const knex = createDb(adminUrl.toString());
try {
	if (process.argv.includes('--fresh')) {
		await knex.raw('drop database if exists ?? with (force)', [name]);
	}
	const { rows } = await knex.raw('select 1 from pg_database where datname = ?', [name]);
	if (rows.length === 0) {
		await knex.raw('create database ??', [name]);
		console.log(`datumkeep: created database ${name}`);
	}
} catch (e) {
	exitWith(explainDbError(e));
} finally {
	await knex.destroy();
}
