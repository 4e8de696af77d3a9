import RedisMock from 'ioredis-mock';
import type { Redis } from 'ioredis';
import { beforeEach, describe, expect, it } from 'vitest';
import {
	clearSignInFailures,
	hit,
	pauseAfter,
	recordSignInFailure,
	SIGN_IN_LIMITS,
	signInBlocked,
	signInKeys
} from './rate-limit';

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

	it('pauses one account from one address after its free failures, with a doubling pause', async () => {
		const { freeFailures } = SIGN_IN_LIMITS.perAccountAddress;
		for (let i = 0; i < freeFailures - 1; i++) {
			expect((await recordSignInFailure(redis, 'Ada@Example.test', '10.0.0.1')).allowed).toBe(true);
			expect((await signInBlocked(redis, 'ada@example.test', '10.0.0.1')).allowed).toBe(true);
		}
		const paused = await recordSignInFailure(redis, 'ada@example.test', '10.0.0.1');
		expect(paused).toMatchObject({ allowed: false, retryAfterSeconds: 60 });
		const blocked = await signInBlocked(redis, 'ADA@example.test', '10.0.0.1');
		expect(blocked.allowed).toBe(false);
		expect(blocked.retryAfterSeconds).toBeGreaterThan(0);
		expect(blocked.retryAfterSeconds).toBeLessThanOrEqual(60);
		// The same account from another address (the owner at home), and a colleague behind the
		// same address (a shop's shared NAT), are not locked out.
		expect((await signInBlocked(redis, 'ada@example.test', '10.0.0.2')).allowed).toBe(true);
		expect((await signInBlocked(redis, 'tomas@example.test', '10.0.0.1')).allowed).toBe(true);
		// Backoff: each further failure doubles the pause, up to the ceiling.
		expect(pauseAfter(freeFailures + 1)).toBe(120);
		expect(pauseAfter(freeFailures + 2)).toBe(240);
		expect(pauseAfter(freeFailures + 40)).toBe(SIGN_IN_LIMITS.perAccountAddress.maxPauseSeconds);
		expect(pauseAfter(freeFailures - 1)).toBe(0);
	});

	it('a success forgets the failures of that account from that address', async () => {
		for (let i = 0; i < 4; i++) await recordSignInFailure(redis, 'kim@example.test', '10.0.0.3');
		await clearSignInFailures(redis, 'kim@example.test', '10.0.0.3');
		expect(await redis.get(signInKeys.failures('kim@example.test', '10.0.0.3'))).toBeNull();
		expect((await recordSignInFailure(redis, 'kim@example.test', '10.0.0.3')).allowed).toBe(true);
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
