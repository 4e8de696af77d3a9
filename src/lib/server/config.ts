/**
 * Server configuration from the environment, read in one place. Used by the app, the worker
 * and the scripts alike (they are all plain Node processes), so it reads process.env rather
 * than SvelteKit's $env modules. Defaults match scripts/env.sh.
 */
export const config = {
	get databaseUrl(): string {
		return process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/datumkeep';
	},
	get redisUrl(): string {
		return process.env.REDIS_URL ?? 'redis://127.0.0.1:63799/0';
	},
	get fakeSesUrl(): string {
		return process.env.SES_ENDPOINT ?? `http://127.0.0.1:${process.env.FAKE_SES_PORT ?? 4579}`;
	},
	/** Set to 1 to let migrate/seed touch a database that is not on this machine. */
	get allowRemoteDatabase(): boolean {
		return process.env.DATUMKEEP_ALLOW_REMOTE_DB === '1';
	}
};
