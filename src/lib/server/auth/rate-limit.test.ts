import RedisMock from 'ioredis-mock';
import type { Redis } from 'ioredis';
import { beforeEach, describe, expect, it } from 'vitest';
import { checkSignIn, hit, SIGN_IN_LIMITS, signInKeys } from './rate-limit';

describe('sign-in rate limiter (ioredis-mock, unit)', () => {
	let redis: Redis;
	beforeEach(async () => {
		redis = new RedisMock() as unknown as Redis;
		await redis.flushall();
	});

	it('allows up to the limit, then refuses, with a retry time inside the window', async () => {
		const limit = { max: 3, windowSeconds: 60 };
		const results = [];
		for (let i = 0; i < 4; i++) results.push(await hit(redis, 'k', limit));
		expect(results.map((r) => r.allowed)).toEqual([true, true, true, false]);
		expect(results[3].retryAfterSeconds).toBeGreaterThan(0);
		expect(results[3].retryAfterSeconds).toBeLessThanOrEqual(60);
	});

	it('limits per e-mail regardless of letter case', async () => {
		for (let i = 0; i < SIGN_IN_LIMITS.perEmail.max; i++) {
			expect((await checkSignIn(redis, 'Ada@Example.test', `10.0.0.${i}`)).allowed).toBe(true);
		}
		expect((await checkSignIn(redis, 'ada@example.test', '10.0.1.1')).allowed).toBe(false);
		expect(await redis.get(signInKeys.email('ADA@example.test'))).toBe(String(SIGN_IN_LIMITS.perEmail.max + 1));
	});

	it('limits per address across many e-mails', async () => {
		for (let i = 0; i < SIGN_IN_LIMITS.perAddress.max; i++) {
			expect((await checkSignIn(redis, `user${i}@example.test`, '192.0.2.7')).allowed).toBe(true);
		}
		expect((await checkSignIn(redis, 'someone@example.test', '192.0.2.7')).allowed).toBe(false);
		expect((await checkSignIn(redis, 'someone@example.test', '192.0.2.8')).allowed).toBe(true);
	});
});
