import type { Knex } from 'knex';
import { publicMigrations } from './migrations/public/index';

/**
 * For the knex CLI (`NODE_OPTIONS="--import tsx" npx knex migrate:status`): the public schema
 * only. Shop schemas are migrated by `npm run migrate` (scripts/migrate.ts), which walks every
 * shop; see DEVELOPERS.md.
 */
const config: Knex.Config = {
	client: 'pg',
	connection: process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/datumkeep',
	migrations: {
		schemaName: 'public',
		migrationSource: {
			getMigrations: async () => Object.keys(publicMigrations).sort(),
			getMigrationName: (name: string) => name,
			getMigration: async (name: string) => publicMigrations[name]
		}
	}
};

export default config;
