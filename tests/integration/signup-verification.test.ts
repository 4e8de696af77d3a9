import type { Knex } from 'knex';
import { afterAll, describe, expect, it } from 'vitest';
import {
	checkSignUpToken,
	completeSignUp,
	requestSignUp,
	type SignUpRequest
} from '$lib/server/auth/signup';
import { hashToken, newToken } from '$lib/server/auth/tokens';
import { findUserByEmail } from '$lib/server/users';
import { testDb, uniqueSuffix } from './db';
import { setEnv } from './env';
import { linkIn, mailsTo } from './mail';

/**
 * Sign-up by e-mail link (issue 13: account enumeration). The form answers the same for a known
 * and a new e-mail (tests/e2e/accounts.spec.ts compares the pages); here: the same work and
 * time on both paths, what each e-mail says, and what a link can and cannot do.
 */
const knex: Knex = testDb();
afterAll(() => knex.destroy());

const KNOWN = 'ada@fernhill.example'; // demo owner (seed)
const PASSWORD = 'signup-pass-42';

function request(email: string, tag = uniqueSuffix()): SignUpRequest {
	return {
		name: 'Vera Verify',
		email,
		password: PASSWORD,
		shopName: `Verify Works ${tag}`,
		shopSlug: `verify-${tag}`
	};
}

const tokenOf = (link: string) => new URL(link).pathname.split('/').at(-1)!;

async function signUpLink(email: string, tag?: string): Promise<string> {
	await requestSignUp(knex, request(email, tag));
	const [mail] = await mailsTo(email);
	return tokenOf(linkIn(mail, /^\/signup\/confirm\//));
}

describe('sign-up does not tell a known e-mail from a new one', () => {
	it('both get an e-mail; only the new one carries a link that creates anything', async () => {
		const fresh = `new-${uniqueSuffix()}@example.test`;
		const knownBefore = (await mailsTo(KNOWN)).length;
		await requestSignUp(knex, request(fresh));
		await requestSignUp(knex, request(KNOWN));

		const [toNew] = await mailsTo(fresh);
		expect(toNew.subject).toMatch(/^Finish starting Verify Works/);
		expect(linkIn(toNew, /^\/signup\/confirm\/[A-Za-z0-9_-]{43}$/)).toBeTruthy();
		expect(await findUserByEmail(knex, fresh)).toBeUndefined(); // nothing until the link

		const known = await mailsTo(KNOWN);
		expect(known).toHaveLength(knownBefore + 1);
		expect(known[0].subject).toBe('Someone tried to start a shop with your e-mail address');
		expect(known[0].text).toContain('already has an account, so nothing was created');
		expect(known[0].text).not.toContain('/signup/confirm/');
		// Both kept the same kind of row (same work), the known one marked.
		const rows = await knex('pending_signups')
			.whereIn('email', [fresh, KNOWN])
			.orderBy('id', 'desc')
			.limit(2)
			.select('email', 'known_account', 'password_hash');
		expect(rows.map((r) => [r.email, r.known_account])).toEqual([
			[KNOWN, true],
			[fresh, false]
		]);
		for (const r of rows) expect(r.password_hash).toMatch(/^\$2[aby]\$08\$/); // BCRYPT_COST=8
	});

	it('a known e-mail and a new one take the same time (medians within 20 %)', async () => {
		const time = async (email: string) => {
			const t0 = performance.now();
			await requestSignUp(knex, request(email));
			return performance.now() - t0;
		};
		await time(`warm-${uniqueSuffix()}@example.test`);
		const known: number[] = [];
		const unknown: number[] = [];
		// Interleaved, so a busy moment on the machine hits both sides alike.
		for (let i = 0; i < 15; i++) {
			known.push(await time(KNOWN));
			unknown.push(await time(`timing-${uniqueSuffix()}@example.test`));
		}
		const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
		const ratio = median(unknown) / median(known);
		expect(ratio).toBeGreaterThan(0.8);
		expect(ratio).toBeLessThan(1.2);
	}, 60_000);

	it('with the mail service down both fail alike and nothing is kept', async () => {
		const fresh = `ses-down-${uniqueSuffix()}@example.test`;
		const saved = process.env.SES_ENDPOINT;
		setEnv('SES_ENDPOINT', 'http://127.0.0.1:9'); // nothing listens on the discard port
		try {
			await expect(requestSignUp(knex, request(fresh))).rejects.toThrow();
			await expect(requestSignUp(knex, request(KNOWN, 'down'))).rejects.toThrow();
		} finally {
			setEnv('SES_ENDPOINT', saved);
		}
		expect(await knex('pending_signups').where({ email: fresh }).first()).toBeUndefined();
		expect(
			await knex('pending_signups').where({ email: KNOWN, shop_slug: 'verify-down' }).first()
		).toBeUndefined();
		expect(await knex('email_log').where({ to_address: fresh }).first()).toBeUndefined();
	}, 30_000);
});

describe('the confirmation link', () => {
	it('needs the chosen password, then makes the account, shop and owner once', async () => {
		const email = `confirm-${uniqueSuffix()}@example.test`;
		const tag = uniqueSuffix();
		const token = await signUpLink(email, tag);
		expect(await checkSignUpToken(knex, token)).toMatchObject({
			ok: true,
			pending: { email, shopSlug: `verify-${tag}` }
		});
		expect(await completeSignUp(knex, token, 'not-my-pass-1')).toEqual({
			ok: false,
			reason: 'password'
		});
		expect(await findUserByEmail(knex, email)).toBeUndefined();

		const done = await completeSignUp(knex, token, PASSWORD, '10.0.0.7');
		expect(done).toMatchObject({ ok: true, email, slug: `verify-${tag}` });
		const user = await findUserByEmail(knex, email);
		const shop = await knex('shops')
			.where({ slug: `verify-${tag}` })
			.first('id', 'name');
		expect(shop.name).toBe(`Verify Works ${tag}`);
		const m = await knex('memberships').where({ user_id: user!.id, shop_id: shop.id }).first();
		expect(m.role).toBe('owner');

		expect(await completeSignUp(knex, token, PASSWORD)).toEqual({ ok: false, reason: 'used' });
		expect(await knex('shops').where({ slug: `verify-${tag}` })).toHaveLength(1);
	});

	it('refuses unknown, expired and known-account tokens, and a second sign-up of one address', async () => {
		expect(await checkSignUpToken(knex, 'no-such-token')).toEqual({ ok: false, reason: 'unknown' });

		const expiredMail = `expired-${uniqueSuffix()}@example.test`;
		const expired = await signUpLink(expiredMail);
		await knex('pending_signups')
			.where({ token_hash: hashToken(expired) })
			.update({ expires_at: new Date(Date.now() - 1000) });
		expect(await completeSignUp(knex, expired, PASSWORD)).toEqual({
			ok: false,
			reason: 'expired'
		});
		expect(await findUserByEmail(knex, expiredMail)).toBeUndefined();

		// A known address's row: its token is never mailed, and even if it were it creates nothing.
		const { token, hash } = newToken();
		await knex('pending_signups').insert({
			email: KNOWN,
			name: 'x',
			password_hash: 'x',
			shop_name: 'x',
			shop_slug: `never-${uniqueSuffix()}`,
			token_hash: hash,
			known_account: true,
			expires_at: new Date(Date.now() + 3600_000)
		});
		expect(await checkSignUpToken(knex, token)).toEqual({ ok: false, reason: 'unknown' });

		// Two sign-ups of one new address: the first link followed wins, the second is told.
		const twice = `twice-${uniqueSuffix()}@example.test`;
		const first = await signUpLink(twice);
		const second = await signUpLink(twice);
		expect(await completeSignUp(knex, first, PASSWORD)).toMatchObject({ ok: true });
		expect(await completeSignUp(knex, second, PASSWORD)).toEqual({
			ok: false,
			reason: 'account-exists'
		});
	});
});
