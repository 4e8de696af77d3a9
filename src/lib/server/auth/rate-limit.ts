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
	const result = await redis.multi().incr(key).expire(key, limit.windowSeconds, 'NX').ttl(key).exec();
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
 * Counts one sign-in attempt against both the e-mail and the address. Both counters move even
 * when one is already over, so an attacker cannot probe which one tripped.
 */
export async function checkSignIn(redis: Redis, email: string, address: string): Promise<LimitResult> {
	const [byEmail, byAddress] = await Promise.all([
		hit(redis, signInKeys.email(email), SIGN_IN_LIMITS.perEmail),
		hit(redis, signInKeys.address(address), SIGN_IN_LIMITS.perAddress)
	]);
	return {
		allowed: byEmail.allowed && byAddress.allowed,
		remaining: Math.min(byEmail.remaining, byAddress.remaining),
		retryAfterSeconds: Math.max(
			byEmail.allowed ? 0 : byEmail.retryAfterSeconds,
			byAddress.allowed ? 0 : byAddress.retryAfterSeconds
		)
	};
}
