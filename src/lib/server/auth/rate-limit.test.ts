import RedisMock from 'ioredis-mock';
import type { Redis } from 'ioredis';
import { beforeEach, describe, expect, it } from 'vitest';
import { hit, recordSignInFailure, SIGN_IN_LIMITS, signInBlocked, signInKeys } from './rate-limit';

describe('sign-in rate limiter (ioredis-mock, unit)', () => {
	let redis: Redis;
	beforeEach(async () => {
		redis = new RedisMock() as unknown as Redis;
		await redis.flushall();
	});

	it('a fixed window allows up to the limit, then refuses with a retry time inside the window', async () => {
		const limit = { max: 3, windowSeconds: 60 };
		const results = [];
		for (let i = 0; i < 4; i++) results.push(await hit(redis, 'k', limit));
		expect(results.map((r) => r.allowed)).toEqual([true, true, true, false]);
		expect(results[3].retryAfterSeconds).toBeGreaterThan(0);
		expect(results[3].retryAfterSeconds).toBeLessThanOrEqual(60);
	});

	it('blocks an e-mail after its failures, whatever the letter case or address', async () => {
		for (let i = 0; i < SIGN_IN_LIMITS.perEmail.max; i++) {
			expect((await signInBlocked(redis, 'Ada@Example.test', `10.0.0.${i}`)).allowed).toBe(true);
			await recordSignInFailure(redis, 'Ada@Example.test', `10.0.0.${i}`);
		}
		const blocked = await signInBlocked(redis, 'ada@example.test', '10.0.1.1');
		expect(blocked.allowed).toBe(false);
		expect(blocked.retryAfterSeconds).toBeGreaterThan(0);
		expect(await redis.get(signInKeys.email('ADA@example.test'))).toBe(
			String(SIGN_IN_LIMITS.perEmail.max)
		);
		expect((await signInBlocked(redis, 'other@example.test', '10.0.1.1')).allowed).toBe(true);
	});

	it('blocks an address after failures spread over many e-mails, and not its neighbour', async () => {
		for (let i = 0; i < SIGN_IN_LIMITS.perAddress.max; i++)
			await recordSignInFailure(redis, `user${i}@example.test`, '192.0.2.7');
		expect((await signInBlocked(redis, 'someone@example.test', '192.0.2.7')).allowed).toBe(false);
		expect((await signInBlocked(redis, 'someone@example.test', '192.0.2.8')).allowed).toBe(true);
	});

	it('never counts a check by itself (successful sign-ins do not use up the budget)', async () => {
		for (let i = 0; i < 50; i++) await signInBlocked(redis, 'busy@example.test', '192.0.2.9');
		expect((await signInBlocked(redis, 'busy@example.test', '192.0.2.9')).allowed).toBe(true);
		expect(await redis.get(signInKeys.address('192.0.2.9'))).toBeNull();
	});
});
