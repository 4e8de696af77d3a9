import { beforeAll, describe, expect, it, vi } from 'vitest';

// An unknown e-mail must cost the same bcrypt work as a known one, or sign-in timing tells
// who has an account (before: a fixed cost-10 dummy against cost-12 real hashes, 4× faster).
describe('verifyPassword: unknown accounts cost the same as known ones', () => {
	let mod: typeof import('./password');
	beforeAll(async () => {
		vi.stubEnv('BCRYPT_COST', '9');
		vi.resetModules();
		mod = await import('./password');
	});

	it('a known account and an unknown one take the same time (medians within 20 %)', async () => {
		const real = await mod.hashPassword('right-password-1');
		await mod.verifyPassword('warm-up', undefined); // the per-process dummy hash is made once
		const known: number[] = [];
		const unknown: number[] = [];
		const time = async (hash: string | undefined) => {
			const t0 = performance.now();
			expect(await mod.verifyPassword('wrong-password-1', hash)).toBe(false);
			return performance.now() - t0;
		};
		// Interleaved, so a busy moment on the machine hits both sides alike.
		for (let i = 0; i < 15; i++) {
			known.push(await time(real));
			unknown.push(await time(undefined));
		}
		const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
		const ratio = median(unknown) / median(known);
		expect(ratio).toBeGreaterThan(0.8);
		expect(ratio).toBeLessThan(1.2);
	});

	it('an unknown account never verifies, whatever the password', async () => {
		expect(await mod.verifyPassword('', null)).toBe(false);
		expect(await mod.verifyPassword('anything-at-all-1', undefined)).toBe(false);
	});
});
