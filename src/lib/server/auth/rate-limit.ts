import type { Redis } from 'ioredis';

export interface RateLimit {
	/** Attempts allowed per window. */
	max: number;
	windowSeconds: number;
}

/**
 * Sign-in limits (our own choice). Failures count per account AND address, so one person
 * guessing at one account is slowed without locking out the rest of a shop floor behind the
 * same address (shared NAT), and nobody elsewhere can lock an account by failing on purpose:
 * `freeFailures` tries, then a pause that doubles with every further failure
 * (1, 2, 4 … minutes, at most `maxPauseSeconds`). One address failing across many accounts
 * (credential stuffing) has its own, much higher, ceiling.
 */
export const SIGN_IN_LIMITS = {
	perAccountAddress: {
		freeFailures: 5,
		firstPauseSeconds: 60,
		maxPauseSeconds: 60 * 60,
		/** How long failures are remembered after the last one. */
		memorySeconds: 24 * 60 * 60
	},
	perAddress: { max: 100, windowSeconds: 15 * 60 }
} as const;

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

const norm = (email: string) => email.trim().toLowerCase();

export const signInKeys = {
	failures: (email: string, address: string) => `dk:signin:fail:${address}:${norm(email)}`,
	pause: (email: string, address: string) => `dk:signin:pause:${address}:${norm(email)}`,
	address: (address: string) => `dk:signin:addr:${address}`
};

/** Whether this account may be tried from this address now; when not, until when. */
export async function signInBlocked(
	redis: Redis,
	email: string,
	address: string
): Promise<LimitResult> {
	const [pauseMs, byAddress] = await Promise.all([
		redis.pttl(signInKeys.pause(email, address)),
		redis.get(signInKeys.address(address))
	]);
	if (pauseMs > 0)
		return { allowed: false, remaining: 0, retryAfterSeconds: Math.ceil(pauseMs / 1000) };
	if (Number(byAddress ?? 0) >= SIGN_IN_LIMITS.perAddress.max) {
		const ttl = await redis.ttl(signInKeys.address(address));
		return { allowed: false, remaining: 0, retryAfterSeconds: Math.max(1, ttl) };
	}
	return { allowed: true, remaining: 0, retryAfterSeconds: 0 };
}

/** The pause after the n-th failure in a row (0 while failures are still free). */
export function pauseAfter(failures: number): number {
	const l = SIGN_IN_LIMITS.perAccountAddress;
	if (failures < l.freeFailures) return 0;
	return Math.min(l.maxPauseSeconds, l.firstPauseSeconds * 2 ** (failures - l.freeFailures));
}

/** Counts one failed sign-in; starts (or lengthens) the pause once the free tries are used. */
export async function recordSignInFailure(
	redis: Redis,
	email: string,
	address: string
): Promise<LimitResult> {
	const l = SIGN_IN_LIMITS.perAccountAddress;
	const key = signInKeys.failures(email, address);
	const res = await redis.multi().incr(key).expire(key, l.memorySeconds).exec();
	const failures = Number(res?.[0]?.[1] ?? 0);
	await hit(redis, signInKeys.address(address), SIGN_IN_LIMITS.perAddress);
	const pause = pauseAfter(failures);
	if (pause > 0) await redis.set(signInKeys.pause(email, address), '1', 'EX', pause);
	return { allowed: pause === 0, remaining: 0, retryAfterSeconds: pause };
}

/** A successful sign-in forgets this account's failures from this address. */
export async function clearSignInFailures(
	redis: Redis,
	email: string,
	address: string
): Promise<void> {
	await redis.del(signInKeys.failures(email, address), signInKeys.pause(email, address));
}
