/**
 * Server configuration from the environment, read in one place. Used by the app, the worker
 * and the scripts alike (they are all plain Node processes), so it reads process.env rather
 * than SvelteKit's $env modules. Defaults match scripts/env.sh.
 */
export const config = {
	get databaseUrl(): string {
		return process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/datumkeep';
	},
	/**
	 * What the app and the worker log in as: DATABASE_APP_URL (the least-privilege
	 * `datumkeep_app` role, see db/roles.ts), else DATABASE_URL. Scripts that migrate or seed
	 * use DATABASE_URL.
	 */
	get appDatabaseUrl(): string {
		return process.env.DATABASE_APP_URL || this.databaseUrl;
	},
	/**
	 * A session-level connection to the same database for what needs one: the change feed's
	 * LISTEN. When the app's URL points at a transaction-pooling PgBouncer (`npm run cluster`),
	 * DATABASE_DIRECT_URL names PostgreSQL itself; otherwise both are the same server.
	 */
	get databaseDirectUrl(): string {
		return process.env.DATABASE_DIRECT_URL || this.appDatabaseUrl;
	},
	/** This app node's name in a cluster (NODE_NAME), sent as `x-datumkeep-node`; none alone. */
	get nodeName(): string | undefined {
		return process.env.NODE_NAME || undefined;
	},
	get redisUrl(): string {
		return process.env.REDIS_URL ?? 'redis://127.0.0.1:63799/0';
	},
	/** SES endpoint: SES_ENDPOINT, else the local fake when FAKE_SES_PORT is set, else AWS. */
	get sesEndpoint(): string | undefined {
		if (process.env.SES_ENDPOINT) return process.env.SES_ENDPOINT;
		if (process.env.FAKE_SES_PORT) return `http://127.0.0.1:${process.env.FAKE_SES_PORT}`;
		return undefined;
	},
	/**
	 * Stripe (issue 8): secret key and webhook secret from the environment (server only). The
	 * API host is real Stripe unless FAKE_STRIPE_PORT points the SDK at the local fake, or
	 * STRIPE_API_HOST/STRIPE_API_PORT/STRIPE_API_PROTOCOL name another endpoint.
	 */
	get stripe(): {
		secretKey: string | undefined;
		webhookSecret: string | undefined;
		api: { host: string; port: number; protocol: 'http' | 'https' } | undefined;
	} {
		const fakePort = process.env.FAKE_STRIPE_PORT;
		const host = process.env.STRIPE_API_HOST;
		const api = host
			? {
					host,
					port: Number(process.env.STRIPE_API_PORT ?? 443),
					protocol:
						process.env.STRIPE_API_PROTOCOL === 'http' ? ('http' as const) : ('https' as const)
				}
			: fakePort
				? { host: '127.0.0.1', port: Number(fakePort), protocol: 'http' as const }
				: undefined;
		return {
			secretKey: process.env.STRIPE_SECRET_KEY || undefined,
			webhookSecret: process.env.STRIPE_WEBHOOK_SECRET || undefined,
			api
		};
	},
	/** Public base URL of the app, for links in e-mails. */
	get origin(): string {
		return process.env.ORIGIN ?? `http://127.0.0.1:${process.env.PORT ?? 5173}`;
	},
	/** Where uploaded files (setup photos) are kept: UPLOADS_DIR, else .data/uploads. Never static/. */
	get uploadsDir(): string {
		return process.env.UPLOADS_DIR || '.data/uploads';
	},
	/** Set to 1 to let migrate/seed touch a database that is not on this machine. */
	get allowRemoteDatabase(): boolean {
		return process.env.DATUMKEEP_ALLOW_REMOTE_DB === '1';
	}
};
