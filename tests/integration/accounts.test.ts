import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hashPassword, verifyPassword } from '$lib/server/auth/password';
import {
	checkResetToken,
	completePasswordReset,
	requestPasswordReset
} from '$lib/server/auth/password-reset';
import {
	acceptInvitation,
	invite,
	lookupInvitation,
	revokeInvitation
} from '$lib/server/members/invitations';
import { changeRole, listMembers, removeMember } from '$lib/server/members/members';
import { createShopWithOwner } from '$lib/server/shops/create';
import { withShop } from '$lib/server/db/tenant';
import { testDb, uniqueSuffix } from './db';
import { linkIn, mailsTo } from './mail';

const knex: Knex = testDb();
afterAll(() => knex.destroy());

let shop: { id: number; schemaName: string; name: string; slug: string };
let owner: { id: number; email: string; name: string; role: 'owner' };

beforeAll(async () => {
	const email = `owner-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: 'Accounts Test Shop', slug: `accounts-${uniqueSuffix()}` },
		{ name: 'Olive Owner', email, password: 'correct-horse-1' }
	);
	shop = { ...created.shop };
	owner = { id: created.userId, email, name: 'Olive Owner', role: 'owner' };
});

const tokenFrom = (link: string) => new URL(link).pathname.split('/').at(-1)!;

describe('invitations (real PostgreSQL, real fake SES)', () => {
	it('e-mails a single-use link (text and HTML parts), stores only its hash, and accepting creates the account and membership', async () => {
		const email = `new-op-${uniqueSuffix()}@example.test`;
		const { token } = await invite(knex, shop, email, 'operator', owner);
		const [mail] = await mailsTo(email);
		expect(mail.subject).toContain('Accounts Test Shop');
		expect(mail.html).toContain('Accept the invitation');
		const link = linkIn(mail, /^\/invitations\//);
		expect(tokenFrom(link)).toBe(token);
		const stored = await knex('invitations').where({ shop_id: shop.id, email }).first();
		expect(stored.token_hash).not.toContain(token);
		expect(stored.token_hash).toMatch(/^[0-9a-f]{64}$/);

		const found = await lookupInvitation(knex, token);
		if (!found.ok) throw new Error('invitation not found');
		expect(found.invitation).toMatchObject({ role: 'operator', hasAccount: false });
		const accepted = await acceptInvitation(knex, found.invitation, {
			name: 'Nina New',
			passwordHash: await hashPassword('abcdefgh12')
		});
		expect('userId' in accepted).toBe(true);
		const members = await listMembers(knex, shop.id);
		expect(members.find((m) => m.email === email)?.role).toBe('operator');

		// Reused link: refused, and nothing changes.
		expect(await lookupInvitation(knex, token)).toEqual({ ok: false, reason: 'used' });
		expect(await acceptInvitation(knex, found.invitation, null)).toEqual({ error: 'used' });
		expect((await listMembers(knex, shop.id)).filter((m) => m.email === email)).toHaveLength(1);
	});

	it('refuses an expired link and an unknown one', async () => {
		const email = `late-${uniqueSuffix()}@example.test`;
		const { token } = await invite(knex, shop, email, 'lead', owner);
		await knex('invitations')
			.where({ shop_id: shop.id, email })
			.update({ expires_at: new Date(Date.now() - 1000) });
		expect(await lookupInvitation(knex, token)).toEqual({ ok: false, reason: 'expired' });
		expect(await lookupInvitation(knex, 'not-a-real-token')).toEqual({
			ok: false,
			reason: 'unknown'
		});
	});

	it('a resend or revoke kills the earlier link', async () => {
		const email = `twice-${uniqueSuffix()}@example.test`;
		const first = await invite(knex, shop, email, 'lead', owner);
		const second = await invite(knex, shop, email, 'lead', owner);
		expect(await lookupInvitation(knex, first.token)).toEqual({ ok: false, reason: 'unknown' });
		expect((await lookupInvitation(knex, second.token)).ok).toBe(true);
		const pending = await knex('invitations')
			.where({ shop_id: shop.id, email })
			.whereNull('revoked_at')
			.first('id');
		expect(await revokeInvitation(knex, shop, Number(pending.id), owner)).toBe(true);
		expect(await lookupInvitation(knex, second.token)).toEqual({ ok: false, reason: 'unknown' });
	});

	it('adds an existing account to a second shop without touching its password', async () => {
		const other = await createShopWithOwner(
			knex,
			{ name: 'Second Shop', slug: `second-${uniqueSuffix()}` },
			{ name: 'Sam Second', email: `sam-${uniqueSuffix()}@example.test`, password: 'second-shop-1' }
		);
		const { token } = await invite(
			knex,
			shop,
			(await knex('users').where({ id: other.userId }).first()).email,
			'lead',
			owner
		);
		const found = await lookupInvitation(knex, token);
		if (!found.ok) throw new Error('invitation not found');
		expect(found.invitation.hasAccount).toBe(true);
		await acceptInvitation(knex, found.invitation, null);
		const shops = await knex('memberships').where({ user_id: other.userId }).pluck('shop_id');
		expect(shops.map(Number).sort()).toEqual([other.shop.id, shop.id].sort());
		const user = await knex('users').where({ id: other.userId }).first();
		expect(await verifyPassword('second-shop-1', user.password_hash)).toBe(true);
	});

	it('records invitations and acceptances in the shop audit log', async () => {
		const actions = await withShop(shop, (trx) => trx('audit_log').pluck('action'), knex);
		expect(actions).toEqual(
			expect.arrayContaining([
				'shop.created',
				'invitation.sent',
				'invitation.accepted',
				'invitation.revoked'
			])
		);
	});
});

describe('last-owner protection', () => {
	it('refuses to demote or remove the only owner, and allows it once there is another', async () => {
		const members = await listMembers(knex, shop.id);
		const mine = members.find((m) => m.userId === owner.id)!;
		const demote = await changeRole(knex, shop, mine.membershipId, 'admin', owner);
		expect(demote).toEqual({ ok: false, message: expect.stringMatching(/last owner/) });
		const remove = await removeMember(knex, shop, mine.membershipId, owner);
		expect(remove).toEqual({ ok: false, message: expect.stringMatching(/last owner/) });
		expect((await listMembers(knex, shop.id)).find((m) => m.userId === owner.id)?.role).toBe(
			'owner'
		);

		const lead = members.find((m) => m.role === 'lead')!;
		// An admin may not hand out ownership.
		const byAdmin = await changeRole(knex, shop, lead.membershipId, 'owner', {
			...owner,
			role: 'admin'
		});
		expect(byAdmin.ok).toBe(false);
		expect(await changeRole(knex, shop, lead.membershipId, 'owner', owner)).toEqual({ ok: true });
		expect(await changeRole(knex, shop, mine.membershipId, 'admin', owner)).toEqual({ ok: true });
		// Restore for the other tests.
		await changeRole(knex, shop, mine.membershipId, 'owner', { ...owner, role: 'owner' });
		const audit = await withShop(
			shop,
			(trx) =>
				trx('audit_log')
					.where({ action: 'member.role-changed' })
					.count<{ count: string }[]>('id as count'),
			knex
		);
		expect(Number(audit[0].count)).toBeGreaterThanOrEqual(3);
	});
});

describe('password reset', () => {
	it('e-mails a single-use link that sets a new password; reuse and expiry are refused', async () => {
		const { email } = owner;
		await requestPasswordReset(knex, email);
		const [mail] = await mailsTo(email);
		expect(mail.subject).toMatch(/Reset your Datumkeep password/);
		expect(mail.html).toBeTruthy();
		const token = tokenFrom(linkIn(mail, /^\/reset\//));
		expect((await checkResetToken(knex, token)).ok).toBe(true);
		expect(await completePasswordReset(knex, token, 'brand-new-pass-2')).toMatchObject({
			ok: true
		});
		const user = await knex('users').where({ id: owner.id }).first();
		expect(await verifyPassword('brand-new-pass-2', user.password_hash)).toBe(true);
		// Used once: refused the second time, password unchanged.
		expect(await completePasswordReset(knex, token, 'another-pass-3')).toEqual({
			ok: false,
			reason: 'used'
		});
		expect(
			await verifyPassword(
				'brand-new-pass-2',
				(await knex('users').where({ id: owner.id }).first()).password_hash
			)
		).toBe(true);

		const { token: late } = await requestPasswordReset(knex, email);
		await knex('password_resets')
			.where({ user_id: owner.id })
			.whereNull('used_at')
			.update({ expires_at: new Date(Date.now() - 1000) });
		expect(await completePasswordReset(knex, late!, 'too-late-pass-4')).toEqual({
			ok: false,
			reason: 'expired'
		});
		expect(await completePasswordReset(knex, 'unknown-token', 'whatever-pass-5')).toEqual({
			ok: false,
			reason: 'unknown'
		});
	});

	it('sends nothing for an unknown e-mail (and the caller answers the same either way)', async () => {
		const email = `nobody-${uniqueSuffix()}@example.test`;
		const result = await requestPasswordReset(knex, email);
		expect(result.token).toBeUndefined();
		expect(await mailsTo(email)).toEqual([]);
	});
});
