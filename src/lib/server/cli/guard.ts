import { config } from '../config';
import { assertLoopbackDatabase, RemoteDatabaseRefused } from '../db/loopback';

/**
 * Shared start of the CLI scripts that write to the database: refuses a non-loopback
 * DATABASE_URL unless --allow-remote-db or DATUMKEEP_ALLOW_REMOTE_DB=1, and turns expected
 * failures into one line instead of a stack trace.
 */
export function guardDatabaseUrl(argv = process.argv): string {
	const url = config.databaseUrl;
	try {
		assertLoopbackDatabase(url, config.allowRemoteDatabase || argv.includes('--allow-remote-db'));
	} catch (e) {
		if (e instanceof RemoteDatabaseRefused) exitWith(e.message);
		throw e;
	}
	return url;
}

export function exitWith(message: string): never {
	console.error(`datumkeep: ${message}`);
	process.exit(1);
}

/** A one-line explanation of the failures a newcomer is likely to meet. */
export function explainDbError(e: unknown): string {
	const err = e as { code?: string; message?: string };
	if (err.code === 'ECONNREFUSED')
		return 'cannot reach PostgreSQL at DATABASE_URL; start it with `npm run db:up` (or `npm start`).';
	if (err.code === '3D000')
		return `the database in DATABASE_URL does not exist; \`npm start\` creates it. (${err.message})`;
	return err.message ?? String(e);
}
