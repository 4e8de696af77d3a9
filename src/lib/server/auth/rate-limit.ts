import type { Redis } from 'ioredis';

export interface RateLimit {
	/** Attempts allowed per window. */
	max: number;
	windowSeconds: number;
}

/** Our defaults for sign-in: 5 tries per e-mail and 20 per network address in 15 minutes. */
export const SIGN_IN_LIMITS = {
	perEmail: { max: 5, windowSeconds: 15 * 60 },
	perAddress: { max: 20, windowSeconds: 15 * 60 }
} satisfies Record<string, RateLimit>;

export interface LimitResult {
	allowed: boolean;
	remaining: number;
	retryAfterSeconds: number;
}

/**
 * Fixed-window counter in Redis, so every app process shares it. INCR and EXPIRE run in one
 * MULTI, and the window only starts at the first hit (EXPIRE NX).
 */
export async function hit(redis: Redis, key: string, limit: RateLimit): Promise<LimitResult> {
	const result = await redis
		.multi()
		.incr(key)
		.expire(key, limit.windowSeconds, 'NX')
		.ttl(key)
		.exec();
	const count = Number(result?.[0]?.[1] ?? 0);
	const ttl = Number(result?.[2]?.[1] ?? limit.windowSeconds);
	return {
		allowed: count <= limit.max,
		remaining: Math.max(0, limit.max - count),
		retryAfterSeconds: ttl > 0 ? ttl : limit.windowSeconds
	};
}

export async function clear(redis: Redis, key: string): Promise<void> {
	await redis.del(key);
}

export const signInKeys = {
	email: (email: string) => `dk:signin:email:${email.trim().toLowerCase()}`,
	address: (address: string) => `dk:signin:addr:${address}`
};

/**
 * Whether sign-in is blocked for this e-mail or address: only failed attempts count, so a shop
 * whose whole crew signs in from one address each morning is never locked out by successes.
 */
export async function signInBlocked(
	redis: Redis,
	email: string,
	address: string
): Promise<LimitResult> {
	const [byEmail, byAddress] = await redis.mget(
		signInKeys.email(email),
		signInKeys.address(address)
	);
	const overEmail = Number(byEmail ?? 0) >= SIGN_IN_LIMITS.perEmail.max;
	const overAddress = Number(byAddress ?? 0) >= SIGN_IN_LIMITS.perAddress.max;
	if (!overEmail && !overAddress) {
		return {
			allowed: true,
			remaining: Math.min(
				SIGN_IN_LIMITS.perEmail.max - Number(byEmail ?? 0),
				SIGN_IN_LIMITS.perAddress.max - Number(byAddress ?? 0)
			),
			retryAfterSeconds: 0
		};
	}
	const ttls = await Promise.all([
		overEmail ? redis.ttl(signInKeys.email(email)) : 0,
		overAddress ? redis.ttl(signInKeys.address(address)) : 0
	]);
	return { allowed: false, remaining: 0, retryAfterSeconds: Math.max(1, ...ttls) };
}

/** Counts one failed sign-in against both the e-mail and the address. */
export async function recordSignInFailure(
	redis: Redis,
	email: string,
	address: string
): Promise<void> {
	await Promise.all([
		hit(redis, signInKeys.email(email), SIGN_IN_LIMITS.perEmail),
		hit(redis, signInKeys.address(address), SIGN_IN_LIMITS.perAddress)
	]);
}
