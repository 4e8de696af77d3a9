import type { Knex } from 'knex';
import { roleWithArticle, type Role } from '$lib/permissions';
import { audit } from '../audit';
import { hashToken, newToken } from '../auth/tokens';
import { config } from '../config';
import { withShop, type ShopRef } from '../db/tenant';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { enterShop } from '../db/roles';

export const INVITATION_DAYS = 7;

export interface Actor {
	id: number;
	email: string;
	name: string;
}

export interface PendingInvitation {
	id: number;
	email: string;
	role: Role;
	expiresAt: string;
	createdAt: string;
	expired: boolean;
}

export async function listPendingInvitations(
	knex: Knex,
	shopId: number
): Promise<PendingInvitation[]> {
	const rows = await knex('public.invitations')
		.where({ shop_id: shopId })
		.whereNull('accepted_at')
		.whereNull('revoked_at')
		.orderBy('created_at', 'desc')
		.select('id', 'email', 'role', 'expires_at', 'created_at');
	const now = Date.now();
	return rows.map((r) => ({
		id: Number(r.id),
		email: r.email,
		role: r.role,
		expiresAt: new Date(r.expires_at).toISOString(),
		createdAt: new Date(r.created_at).toISOString(),
		expired: new Date(r.expires_at).getTime() < now
	}));
}

async function mailInvitation(
	knex: Knex,
	shop: { id: number; name: string },
	email: string,
	role: Role,
	token: string,
	by: Actor
) {
	const url = `${config.origin}/invitations/${token}`;
	const mail = renderEmail({
		subject: `${by.name} invited you to ${shop.name} on Datumkeep`,
		paragraphs: [
			`${by.name} (${by.email}) invited you to join ${shop.name} on Datumkeep as ${roleWithArticle(role)}.`,
			`The link works once and expires in ${INVITATION_DAYS} days. If you did not expect this, ignore this e-mail.`
		],
		action: { label: 'Accept the invitation', url }
	});
	await sendEmail(knex, { ...mail, to: email, kind: 'invitation', shopId: shop.id });
}

/**
 * Invites an e-mail address to the shop with a role. An earlier pending invitation for the same
 * address is revoked, so only the newest link works. Returns the token (for tests; the page
 * never shows it: it travels only by e-mail).
 */
export async function invite(
	knex: Knex,
	shop: ShopRef & { name: string },
	email: string,
	role: Role,
	by: Actor,
	ip = ''
): Promise<{ token: string; alreadyMember: boolean; mailed: boolean }> {
	const member = await knex('public.memberships as m')
		.join('public.users as u', 'u.id', 'm.user_id')
		.where('m.shop_id', shop.id)
		.whereRaw('lower(u.email) = lower(?)', [email])
		.first('m.id');
	if (member) return { token: '', alreadyMember: true, mailed: false };
	const { token, hash } = newToken();
	await knex.transaction(async (trx) => {
		await trx('public.invitations')
			.where({ shop_id: shop.id })
			.whereRaw('lower(email) = lower(?)', [email])
			.whereNull('accepted_at')
			.whereNull('revoked_at')
			.update({ revoked_at: trx.fn.now() });
		await trx('public.invitations').insert({
			shop_id: shop.id,
			email,
			role,
			token_hash: hash,
			invited_by: by.id,
			expires_at: new Date(Date.now() + INVITATION_DAYS * 86_400_000)
		});
	});
	await withShop(shop, (trx) =>
		audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'invitation.sent',
			target: email,
			detail: { role },
			ip
		})
	);
	// The invitation is saved either way; when the mail service is down the page says so and
	// offers Resend (a new link) instead of answering 500 with the invitation kept.
	try {
		await mailInvitation(knex, shop, email, role, token, by);
	} catch (e) {
		console.error(`invitation e-mail to ${email} not sent:`, (e as Error).message);
		return { token, alreadyMember: false, mailed: false };
	}
	return { token, alreadyMember: false, mailed: true };
}

/** Sends a pending invitation again with a new link (the old link stops working). */
export async function resendInvitation(
	knex: Knex,
	shop: ShopRef & { name: string },
	invitationId: number,
	by: Actor,
	ip = ''
) {
	const inv = await knex('public.invitations')
		.where({ id: invitationId, shop_id: shop.id })
		.whereNull('accepted_at')
		.whereNull('revoked_at')
		.first('email', 'role');
	if (!inv) return false;
	return (await invite(knex, shop, inv.email, inv.role, by, ip)).mailed ? true : 'not-mailed';
}

export async function revokeInvitation(
	knex: Knex,
	shop: ShopRef,
	invitationId: number,
	by: Actor,
	ip = ''
) {
	const [row] = await knex('public.invitations')
		.where({ id: invitationId, shop_id: shop.id })
		.whereNull('accepted_at')
		.whereNull('revoked_at')
		.update({ revoked_at: knex.fn.now() })
		.returning('email');
	if (!row) return false;
	await withShop(shop, (trx) =>
		audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'invitation.revoked',
			target: row.email,
			ip
		})
	);
	return true;
}

export interface InvitationView {
	id: number;
	shopId: number;
	shopName: string;
	schemaName: string;
	shopSlug: string;
	email: string;
	role: Role;
	hasAccount: boolean;
}

export type InvitationLookup =
	{ ok: true; invitation: InvitationView } | { ok: false; reason: 'unknown' | 'expired' | 'used' };

/** Finds the invitation a link points at. Unknown, revoked, used and expired links are told apart only as much as the invitee needs. */
export async function lookupInvitation(knex: Knex, token: string): Promise<InvitationLookup> {
	const r = await knex('public.invitations as i')
		.join('public.shops as s', 's.id', 'i.shop_id')
		.where('i.token_hash', hashToken(token))
		.first(
			'i.id',
			'i.shop_id',
			'i.email',
			'i.role',
			'i.expires_at',
			'i.accepted_at',
			'i.revoked_at',
			's.name',
			's.slug',
			's.schema_name'
		);
	if (!r || r.revoked_at) return { ok: false, reason: 'unknown' };
	if (r.accepted_at) return { ok: false, reason: 'used' };
	if (new Date(r.expires_at).getTime() < Date.now()) return { ok: false, reason: 'expired' };
	const user = await knex('public.users')
		.whereRaw('lower(email) = lower(?)', [r.email])
		.first('id');
	return {
		ok: true,
		invitation: {
			id: Number(r.id),
			shopId: Number(r.shop_id),
			shopName: r.name,
			shopSlug: r.slug,
			schemaName: r.schema_name,
			email: r.email,
			role: r.role,
			hasAccount: !!user
		}
	};
}

/**
 * Accepts an invitation: marks it used (only if still unused — a second click loses the race),
 * creates the account when the e-mail has none, adds the membership and audits it, all in one
 * transaction.
 */
export async function acceptInvitation(
	knex: Knex,
	inv: InvitationView,
	newAccount: { name: string; passwordHash: string } | null,
	ip = ''
): Promise<{ userId: number } | { error: 'used' }> {
	return knex.transaction(async (trx) => {
		const claimed = await trx('public.invitations')
			.where({ id: inv.id })
			.whereNull('accepted_at')
			.whereNull('revoked_at')
			.where('expires_at', '>', trx.fn.now())
			.update({ accepted_at: trx.fn.now() })
			.returning('id');
		if (claimed.length === 0) return { error: 'used' as const };
		let user = await trx('public.users')
			.whereRaw('lower(email) = lower(?)', [inv.email])
			.first('id');
		if (!user) {
			if (!newAccount) throw new Error('an account is needed to accept this invitation');
			[user] = await trx('public.users')
				.insert({ email: inv.email, name: newAccount.name, password_hash: newAccount.passwordHash })
				.returning('id');
		}
		const userId = Number(user.id);
		await trx('public.memberships')
			.insert({ user_id: userId, shop_id: inv.shopId, role: inv.role })
			.onConflict(['user_id', 'shop_id'])
			.ignore();
		await enterShop(trx, inv.schemaName);
		await audit(trx, {
			actorUserId: userId,
			actorEmail: inv.email,
			action: 'invitation.accepted',
			target: inv.email,
			detail: { role: inv.role },
			ip
		});
		return { userId };
	});
}
