import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { completePasswordReset, requestPasswordReset } from '$lib/server/auth/password-reset';
import { invite, resendInvitation } from '$lib/server/members/invitations';
import { listMembers, removeMember } from '$lib/server/members/members';
import { createShopWithOwner } from '$lib/server/shops/create';
import { findUserByEmail } from '$lib/server/users';
import { testDb, uniqueSuffix } from './db';
import { linkIn, mailsTo } from './mail';

/**
 * Issue 13: what ends a person's sessions (the session generation every cookie must match,
 * checked in hooks.server.ts; tests/e2e/security.spec.ts shows an old cookie refused), and an
 * invitation made while the mail service is down.
 */
const knex: Knex = testDb();
afterAll(() => knex.destroy());

let shop: { id: number; schemaName: string; name: string; slug: string };
let owner: { id: number; email: string; name: string; role: 'owner' };
beforeAll(async () => {
	const email = `gen-owner-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: 'Sessions Shop', slug: `sessions-${uniqueSuffix()}` },
		{ name: 'Gen Owner', email, password: 'correct-horse-1' }
	);
	shop = { ...created.shop };
	owner = { id: created.userId, email, name: 'Gen Owner', role: 'owner' };
});

const generation = async (email: string) => (await findUserByEmail(knex, email))!.sessionGeneration;

describe('session generation', () => {
	it('a password reset moves it on', async () => {
		const before = await generation(owner.email);
		await requestPasswordReset(knex, owner.email);
		const [mail] = await mailsTo(owner.email);
		const token = new URL(linkIn(mail, /^\/reset\//)).pathname.split('/').at(-1)!;
		expect(await completePasswordReset(knex, token, 'another-horse-2')).toMatchObject({ ok: true });
		expect(await generation(owner.email)).toBe(before + 1);
	});

	it('removal from a shop moves it on', async () => {
		const email = `gen-member-${uniqueSuffix()}@example.test`;
		const [u] = await knex('users').insert({ email, name: 'Gen Member' }).returning('id');
		const [m] = await knex('memberships')
			.insert({ user_id: u.id, shop_id: shop.id, role: 'operator' })
			.returning('id');
		const before = await generation(email);
		expect(await removeMember(knex, shop, Number(m.id), owner)).toMatchObject({ ok: true });
		expect(await generation(email)).toBe(before + 1);
		expect((await listMembers(knex, shop.id)).map((x) => x.email)).not.toContain(email);
	});
});

describe('an invitation while the mail service is down', () => {
	it('is kept, says the e-mail was not sent, and Resend sends it once the service is back', async () => {
		const email = `ses-down-${uniqueSuffix()}@example.test`;
		const saved = process.env.SES_ENDPOINT;
		process.env.SES_ENDPOINT = 'http://127.0.0.1:9'; // nothing listens on the discard port
		let result;
		try {
			result = await invite(knex, shop, email, 'operator', owner);
		} finally {
			if (saved === undefined) delete process.env.SES_ENDPOINT;
			else process.env.SES_ENDPOINT = saved;
		}
		expect(result).toMatchObject({ alreadyMember: false, mailed: false });
		const [pending] = await knex('invitations')
			.where({ shop_id: shop.id, email })
			.whereNull('revoked_at')
			.select('id');
		expect(pending).toBeDefined();
		expect(await mailsTo(email)).toHaveLength(0);
		expect(await resendInvitation(knex, shop, Number(pending.id), owner)).toBe(true);
		expect(await mailsTo(email)).toHaveLength(1);
	}, 30_000);
});
