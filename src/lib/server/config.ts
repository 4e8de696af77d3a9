import { z } from 'zod';
import { PLAN_KEYS, type PlanKey } from '../billing/plans';
import { isLoopbackHost } from './db/loopback';

/**
 * Server configuration from the environment, read in one place and checked against one schema.
 * Used by the app, the worker and the scripts alike (they are all plain Node processes), so it
 * reads process.env rather than SvelteKit's $env modules. Defaults match scripts/env.sh; an
 * empty value counts as unset (a `.env` line such as `NODE_NAME=`). A bad value stops the
 * process with a {@link ConfigError} naming the variable, instead of a surprise later.
 */

/** A variable that is set but wrong: names it, shows the value (a URL's password hidden) and says why. */
export class ConfigError extends Error {
	constructor(
		readonly variable: string,
		readonly reason: string
	) {
		super(`Configuration: ${variable} ${reason}`);
		this.name = 'ConfigError';
	}
}

const url = (protocols: string[]) =>
	z.string().refine(
		(s) => {
			try {
				return protocols.includes(new URL(s).protocol.replace(/:$/, ''));
			} catch {
				return false;
			}
		},
		{ message: `must be a URL starting ${protocols.map((p) => `${p}://`).join(' or ')}` }
	);
const whole = (min: number, max = Number.MAX_SAFE_INTEGER) =>
	z
		.string()
		.regex(/^\d+$/, { message: 'must be a whole number' })
		.transform(Number)
		.refine((n) => n >= min && n <= max, {
			message: `must be between ${min} and ${max === Number.MAX_SAFE_INTEGER ? 'any size' : max}`
		});
const port = whole(1, 65535);
/** Other database servers: `name=postgres://…` pairs separated by commas. */
const serverList = z.string().transform((s, ctx) => {
	const servers: Record<string, string> = {};
	for (const part of s
		.split(',')
		.map((p) => p.trim())
		.filter(Boolean)) {
		const m = /^([a-z][a-z0-9_-]{0,39})=(postgres(?:ql)?:\/\/.+)$/.exec(part);
		if (!m || m[1] === 'home' || URL.canParse(m[2]) === false) {
			ctx.addIssue({
				code: 'custom',
				message:
					'must be name=postgres://… pairs separated by commas (names: lower-case letters, digits, - and _; not "home")'
			});
			return z.NEVER;
		}
		servers[m[1]] = m[2];
	}
	return servers;
});
const flag = z.enum(['0', '1'], { message: 'must be 0 or 1' });

/** Every variable the server code reads. scripts/, fakes/, bench/ and the test configs keep their own. */
export const envSchema = z.object({
	DATABASE_URL: url(['postgres', 'postgresql']).default(
		'postgres://postgres@127.0.0.1:54329/datumkeep'
	),
	DATABASE_APP_URL: url(['postgres', 'postgresql']).optional(),
	DATABASE_DIRECT_URL: url(['postgres', 'postgresql']).optional(),
	DATABASE_POOL_MAX: whole(1, 1000).default(10),
	DATABASE_SERVERS: serverList.optional(),
	DATABASE_SERVERS_ADMIN: serverList.optional(),
	DATUMKEEP_ALLOW_REMOTE_DB: flag.default('0'),
	REDIS_URL: url(['redis', 'rediss']).default('redis://127.0.0.1:63799/0'),
	QUEUE_PREFIX: z
		.string()
		.regex(/^[A-Za-z0-9_.-]+$/, { message: 'may hold only letters, digits, _ . and -' })
		.default('datumkeep'),
	NODE_NAME: z.string().optional(),
	WORKER_NAME: z.string().optional(),
	PORT: port.default(5173),
	ORIGIN: url(['http', 'https']).optional(),
	AUTH_SECRET: z.string().optional(),
	BCRYPT_COST: whole(4, 31).default(12),
	CLOCK_SKEW_MS: whole(0).default(100),
	UPLOADS_DIR: z.string().default('.data/uploads'),
	FLEET_BOARD_CACHE: z.enum(['on', 'off'], { message: 'must be on or off' }).default('on'),
	SHOP_CHECKS_BACKOFF_MS: whole(0).default(30_000),
	SHOP_CHECKS_CONCURRENCY: whole(1, 64).default(2),
	SHOP_CHECKS_LOCK_MS: whole(1).optional(),
	SHOP_DELETION_GRACE_SECONDS: whole(0).optional(),
	SES_ENDPOINT: url(['http', 'https']).optional(),
	FAKE_SES_PORT: port.optional(),
	AWS_REGION: z.string().default('us-east-1'),
	AWS_ACCESS_KEY_ID: z.string().optional(),
	AWS_SECRET_ACCESS_KEY: z.string().optional(),
	MAIL_FROM: z.string().default('Datumkeep <no-reply@datumkeep.test>'),
	STRIPE_SECRET_KEY: z.string().optional(),
	STRIPE_WEBHOOK_SECRET: z.string().optional(),
	FAKE_STRIPE_PORT: port.optional(),
	STRIPE_API_HOST: z.string().optional(),
	STRIPE_API_PORT: port.default(443),
	STRIPE_API_PROTOCOL: z
		.enum(['http', 'https'], { message: 'must be http or https' })
		.default('https'),
	STRIPE_PRICE_BENCH: z.string().optional(),
	STRIPE_PRICE_SHOP: z.string().optional(),
	STRIPE_PRICE_FLOOR: z.string().optional()
});
export type Env = z.infer<typeof envSchema>;

/** Checks an environment against {@link envSchema}; throws a {@link ConfigError} for the first bad variable. */
export function parseEnv(env: Record<string, string | undefined>): Env {
	const known = Object.keys(envSchema.shape);
	const input = Object.fromEntries(
		known.filter((k) => env[k] !== undefined && env[k] !== '').map((k) => [k, env[k]])
	);
	const parsed = envSchema.safeParse(input);
	if (parsed.success) return parsed.data;
	const issue = parsed.error.issues[0];
	const variable = String(issue.path[0]);
	const raw = input[variable];
	// A URL's password is never printed.
	const shown = JSON.stringify(String(raw).replace(/(\/\/[^:/@]*:)[^@]*@/g, '$1***@'));
	throw new ConfigError(variable, `= ${shown} ${issue.message}.`);
}

let current: Env | undefined;

/** The environment, parsed on first use and kept. */
function env(): Env {
	return (current ??= parseEnv(process.env));
}

/**
 * Forgets the parsed environment so the next read parses process.env again. Only tests that
 * change process.env while running (to move an endpoint or the uploads folder) call it.
 */
export function reloadConfig(): void {
	current = undefined;
}

/** Where an SES endpoint is the project's fake (fakes/ses.ts): loopback only, never real SES. */
function isLocalEndpoint(endpoint: string | undefined): boolean {
	return endpoint !== undefined && isLoopbackHost(new URL(endpoint).hostname);
}

export const config = {
	get databaseUrl(): string {
		return env().DATABASE_URL;
	},
	/**
	 * What the app and the worker log in as: DATABASE_APP_URL (the least-privilege
	 * `datumkeep_app` role, see db/roles.ts), else DATABASE_URL. Scripts that migrate or seed
	 * use DATABASE_URL.
	 */
	get appDatabaseUrl(): string {
		return env().DATABASE_APP_URL ?? this.databaseUrl;
	},
	/**
	 * A session-level connection to the same database for what needs one: the change feed's
	 * LISTEN. When the app's URL points at a transaction-pooling PgBouncer (`npm run cluster`),
	 * DATABASE_DIRECT_URL names PostgreSQL itself; otherwise both are the same server.
	 */
	get databaseDirectUrl(): string {
		return env().DATABASE_DIRECT_URL ?? this.appDatabaseUrl;
	},
	/**
	 * The other PostgreSQL servers that may hold shop schemas (DATABASE_SERVERS,
	 * `name=postgres://…` pairs): name → the URL the app logs in with there. The home server
	 * (`home`) is DATABASE_APP_URL; public.shop_servers says which server holds which shop.
	 */
	get databaseServers(): Record<string, string> {
		return env().DATABASE_SERVERS ?? {};
	},
	/**
	 * What scripts that move or migrate shop schemas log in as on the other servers
	 * (DATABASE_SERVERS_ADMIN, same form; the superuser or a DBA role, as DATABASE_URL is at
	 * home); a server missing there falls back to its DATABASE_SERVERS URL.
	 */
	get databaseServersAdmin(): Record<string, string> {
		return { ...(env().DATABASE_SERVERS ?? {}), ...(env().DATABASE_SERVERS_ADMIN ?? {}) };
	},
	/** Connections per Knex pool (DATABASE_POOL_MAX, 10). */
	get databasePoolMax(): number {
		return env().DATABASE_POOL_MAX;
	},
	/** Set to 1 to let migrate/seed touch a database that is not on this machine. */
	get allowRemoteDatabase(): boolean {
		return env().DATUMKEEP_ALLOW_REMOTE_DB === '1';
	},
	/** This app node's name in a cluster (NODE_NAME), sent as `x-datumkeep-node`; none alone. */
	get nodeName(): string | undefined {
		return env().NODE_NAME;
	},
	get redisUrl(): string {
		return env().REDIS_URL;
	},
	/** Prefix of every BullMQ key, so several copies can share one Redis (QUEUE_PREFIX). */
	get queuePrefix(): string {
		return env().QUEUE_PREFIX;
	},
	/** Public base URL of the app, for links in e-mails: ORIGIN, else loopback on PORT. */
	get origin(): string {
		return env().ORIGIN ?? `http://127.0.0.1:${env().PORT}`;
	},
	/** Auth.js signing secret; Auth.js itself refuses to start without one. */
	get authSecret(): string | undefined {
		return env().AUTH_SECRET;
	},
	/** bcrypt work factor for new password hashes (tests lower it for speed). */
	get bcryptCost(): number {
		return env().BCRYPT_COST;
	},
	/** Clock skew allowed between app nodes when deciding read-your-writes (db/read-your-writes.ts). */
	get clockSkewMs(): number {
		return env().CLOCK_SKEW_MS;
	},
	/** Where uploaded files (setup photos) are kept: UPLOADS_DIR, else .data/uploads. Never static/. */
	get uploadsDir(): string {
		return env().UPLOADS_DIR;
	},
	/** FLEET_BOARD_CACHE=off builds every fleet board afresh (benchmarks compare the two). */
	get fleetBoardCache(): boolean {
		return env().FLEET_BOARD_CACHE === 'on';
	},
	/** Background shop checks: retry backoff, worker concurrency, lock time, worker name. */
	get shopChecks(): {
		backoffMs: number;
		concurrency: number;
		lockMs: number | undefined;
		workerName: string | undefined;
	} {
		const e = env();
		return {
			backoffMs: e.SHOP_CHECKS_BACKOFF_MS,
			concurrency: e.SHOP_CHECKS_CONCURRENCY,
			lockMs: e.SHOP_CHECKS_LOCK_MS,
			workerName: e.WORKER_NAME
		};
	},
	/** SHOP_DELETION_GRACE_SECONDS: tests shorten a deleted shop's grace period; unset = 14 days. */
	get shopDeletionGraceSeconds(): number | undefined {
		return env().SHOP_DELETION_GRACE_SECONDS;
	},
	/** SES endpoint: SES_ENDPOINT, else the local fake when FAKE_SES_PORT is set, else AWS. */
	get sesEndpoint(): string | undefined {
		const e = env();
		if (e.SES_ENDPOINT) return e.SES_ENDPOINT;
		if (e.FAKE_SES_PORT) return `http://127.0.0.1:${e.FAKE_SES_PORT}`;
		return undefined;
	},
	/**
	 * The SES client's settings. Fixed credentials only for a loopback endpoint (the local fake,
	 * which checks none); anywhere else credentials are left to the AWS SDK's own chain
	 * (environment, shared files, instance or task role), as production needs.
	 */
	get ses(): {
		endpoint: string | undefined;
		region: string;
		local: boolean;
		credentials: { accessKeyId: string; secretAccessKey: string } | undefined;
		from: string;
	} {
		const e = env();
		const endpoint = this.sesEndpoint;
		const local = isLocalEndpoint(endpoint);
		return {
			endpoint,
			region: e.AWS_REGION,
			local,
			credentials: local
				? {
						accessKeyId: e.AWS_ACCESS_KEY_ID ?? 'local-fake',
						secretAccessKey: e.AWS_SECRET_ACCESS_KEY ?? 'local-fake'
					}
				: undefined,
			from: e.MAIL_FROM
		};
	},
	/**
	 * Stripe: secret key and webhook secret from the environment (server only). The API host is
	 * real Stripe unless FAKE_STRIPE_PORT points the SDK at the local fake, or
	 * STRIPE_API_HOST/STRIPE_API_PORT/STRIPE_API_PROTOCOL name another endpoint. Prices per plan
	 * from STRIPE_PRICE_<PLAN>.
	 */
	get stripe(): {
		secretKey: string | undefined;
		webhookSecret: string | undefined;
		api: { host: string; port: number; protocol: 'http' | 'https' } | undefined;
		prices: Partial<Record<PlanKey, string>>;
	} {
		const e = env();
		const api = e.STRIPE_API_HOST
			? { host: e.STRIPE_API_HOST, port: e.STRIPE_API_PORT, protocol: e.STRIPE_API_PROTOCOL }
			: e.FAKE_STRIPE_PORT
				? { host: '127.0.0.1', port: e.FAKE_STRIPE_PORT, protocol: 'http' as const }
				: undefined;
		const prices: Partial<Record<PlanKey, string>> = {};
		for (const plan of PLAN_KEYS) {
			const id = e[`STRIPE_PRICE_${plan.toUpperCase()}` as `STRIPE_PRICE_${Uppercase<PlanKey>}`];
			if (id) prices[plan] = id;
		}
		return {
			secretKey: e.STRIPE_SECRET_KEY,
			webhookSecret: e.STRIPE_WEBHOOK_SECRET,
			api,
			prices
		};
	}
};
