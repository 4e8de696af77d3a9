import { createHmac } from 'node:crypto';
import { ConfigError, config } from '../config';
import { assertShopSchema } from './schema-name';

/**
 * The shop's token: the second lock on its tables (docs/SECURITY.md). The app role may switch
 * to any shop's role, so SQL injected into one shop's transaction could `SET ROLE` to another.
 * Every shop table therefore has a row-level security policy that opens only when the
 * transaction carries that shop's token (`datumkeep.shop_token`, set by enterShop). The token is
 * an HMAC of the schema name under the server secret, which never enters the database; the
 * database keeps only its SHA-256 (`public.dk_shop_keys`, readable by the owner role alone), so
 * SQL run as the app role can check a token but not learn or forge another shop's.
 *
 * The secret is AUTH_SECRET: whoever holds it can already sign in as anyone, so deriving from
 * it adds no new thing to guard. Changing it needs `npm run migrate` (re-keys every schema).
 */
const LABEL = 'datumkeep shop token v1';

/** The shop's token, or null when no AUTH_SECRET is configured. */
export function shopToken(schemaName: string): string | null {
	assertShopSchema(schemaName);
	const secret = config.authSecret;
	if (!secret) return null;
	return createHmac('sha256', secret).update(`${LABEL}\0${schemaName}`).digest('hex');
}

/** The shop's token; a clear error when AUTH_SECRET is missing (provisioning, re-keying). */
export function requireShopToken(schemaName: string): string {
	const token = shopToken(schemaName);
	if (token === null)
		throw new ConfigError(
			'AUTH_SECRET',
			'is not set: shop schemas are keyed with it (docs/SECURITY.md). Set it as the app has it (.env).'
		);
	return token;
}
