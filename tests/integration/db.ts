import type { Knex } from 'knex';
import { createDb } from '$lib/server/db';
import { config } from '$lib/server/config';

/**
 * The integration tests' database: the real PostgreSQL that `npm test` migrated and seeded.
 * Refuses anything but a database whose name ends in `_test`, so a stray run can never touch
 * development data.
 */
export function testDb(): Knex {
	const url = config.databaseUrl;
	const name = new URL(url).pathname.slice(1);
	if (!name.endsWith('_test')) {
		throw new Error(
			`integration tests need a *_test database; DATABASE_URL names "${name}". Run them with npm test.`
		);
	}
	return createDb(url);
}

export function uniqueSuffix(): string {
	return `${Date.now().toString(36)}${Math.floor(Math.random() * 1e6).toString(36)}`;
}

export async function schemaExists(knex: Knex, schema: string): Promise<boolean> {
	const { rows } = await knex.raw(
		'select 1 from information_schema.schemata where schema_name = ?',
		[schema]
	);
	return rows.length > 0;
}

export async function tablesIn(knex: Knex, schema: string): Promise<string[]> {
	const { rows } = await knex.raw(
		"select table_name from information_schema.tables where table_schema = ? and table_type = 'BASE TABLE' order by 1",
		[schema]
	);
	return rows.map((r: { table_name: string }) => r.table_name);
}
