import type { Knex } from 'knex';
import { config } from '../config';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { createShopWithOwner } from '../shops/create';
import { slugTaken } from '../shops/queries';
import { findUserByEmail } from '../users';
import { hashPassword, verifyPassword } from './password';
import { hashToken, newToken } from './tokens';

export const SIGNUP_HOURS = 24;

export interface SignUpRequest {
	name: string;
	email: string;
	password: string;
	shopName: string;
	shopSlug: string;
}

/**
 * Starts a sign-up without telling a known e-mail from a new one (issue 13). Both paths do the
 * same work — look the address up, hash the password at the accounts' bcrypt cost, keep one
 * pending row, send one e-mail — and the caller shows the same page. Only the e-mail differs:
 * a new address gets the link that creates the shop; a known one is told someone tried, with
 * no link that creates anything. When the mail cannot be sent the row is removed again and the
 * error is thrown (nothing half-made; the person tries again).
 */
export async function requestSignUp(knex: Knex, s: SignUpRequest, ip = ''): Promise<void> {
	const email = s.email.trim();
	const known = await findUserByEmail(knex, email);
	const passwordHash = await hashPassword(s.password);
	const { token, hash } = newToken();
	// Old rows go as new ones come (the same cheap statement on both paths).
	await knex('public.pending_signups')
		.where('expires_at', '<', knex.raw("now() - interval '7 days'"))
		.del();
	const [row] = await knex('public.pending_signups')
		.insert({
			email,
			name: s.name,
			password_hash: passwordHash,
			shop_name: s.shopName,
			shop_slug: s.shopSlug,
			token_hash: hash,
			known_account: Boolean(known),
			ip,
			expires_at: new Date(Date.now() + SIGNUP_HOURS * 3600_000)
		})
		.returning('id');
	const mail = known ? knownAccountMail(s) : confirmMail(s, token);
	try {
		await sendEmail(knex, { ...mail, to: email, kind: known ? 'signup-known' : 'signup-confirm' });
	} catch (e) {
		await knex('public.pending_signups').where({ id: row.id }).del();
		throw e;
	}
}

function confirmMail(s: SignUpRequest, token: string) {
	return renderEmail({
		subject: `Finish starting ${s.shopName} on Datumkeep`,
		paragraphs: [
			`Someone (hopefully you) asked to start the shop "${s.shopName}" on Datumkeep with this e-mail address.`,
			`Follow the link and enter the password you chose to create the shop and become its owner. The link works once and expires in ${SIGNUP_HOURS} hours.`
		],
		action: { label: 'Finish starting the shop', url: `${config.origin}/signup/confirm/${token}` },
		notes: ['If you did not ask, ignore this e-mail: nothing has been created.']
	});
}

function knownAccountMail(s: SignUpRequest) {
	return renderEmail({
		subject: 'Someone tried to start a shop with your e-mail address',
		paragraphs: [
			`Someone tried to start the shop "${s.shopName}" on Datumkeep with this e-mail address. This address already has an account, so nothing was created.`,
			'If it was you: sign in, then start the new shop from your shop list ("Start a new shop").'
		],
		action: { label: 'Sign in', url: `${config.origin}/signin?next=/shops/new` },
		notes: [
			'If it was not you, you need not do anything: your account and your shops are unchanged.'
		]
	});
}

export interface PendingSignUp {
	id: number;
	email: string;
	name: string;
	shopName: string;
	shopSlug: string;
	passwordHash: string;
}

export type SignUpProblem = 'unknown' | 'expired' | 'used' | 'account-exists' | 'slug-taken';
export type SignUpCheck =
	{ ok: true; pending: PendingSignUp } | { ok: false; reason: SignUpProblem };

/** What a confirmation link stands for, or why it cannot be used. */
export async function checkSignUpToken(knex: Knex, token: string): Promise<SignUpCheck> {
	const r = await knex('public.pending_signups')
		.where({ token_hash: hashToken(token) })
		.first();
	// A known address's row never had its token sent; were it guessed, it still creates nothing.
	if (!r || r.known_account) return { ok: false, reason: 'unknown' };
	if (r.used_at) return { ok: false, reason: 'used' };
	if (new Date(r.expires_at).getTime() < Date.now()) return { ok: false, reason: 'expired' };
	if (await findUserByEmail(knex, r.email)) return { ok: false, reason: 'account-exists' };
	if (await slugTaken(knex, r.shop_slug)) return { ok: false, reason: 'slug-taken' };
	return {
		ok: true,
		pending: {
			id: Number(r.id),
			email: r.email,
			name: r.name,
			shopName: r.shop_name,
			shopSlug: r.shop_slug,
			passwordHash: r.password_hash
		}
	};
}

export type SignUpCompletion =
	| { ok: true; email: string; slug: string; userId: number }
	| { ok: false; reason: SignUpProblem | 'password' };

/**
 * Follows a confirmation link: the password typed must be the one chosen at sign-up (so the
 * link alone — forwarded, or opened by a mail scanner — creates nothing), then the account,
 * the shop and the membership are made in one transaction that also uses up the token.
 */
export async function completeSignUp(
	knex: Knex,
	token: string,
	password: string,
	ip = ''
): Promise<SignUpCompletion> {
	const check = await checkSignUpToken(knex, token);
	if (!check.ok) return check;
	const p = check.pending;
	if (!(await verifyPassword(password, p.passwordHash))) return { ok: false, reason: 'password' };
	try {
		return await knex.transaction(async (trx) => {
			const [used] = await trx('public.pending_signups')
				.where({ id: p.id })
				.whereNull('used_at')
				.where('expires_at', '>', trx.fn.now())
				.update({ used_at: trx.fn.now() })
				.returning('id');
			if (!used) throw new SignUpRace('used');
			const { userId } = await createShopWithOwner(
				trx,
				{ name: p.shopName, slug: p.shopSlug },
				{ name: p.name, email: p.email, passwordHash: p.passwordHash },
				ip
			);
			return { ok: true as const, email: p.email, slug: p.shopSlug, userId };
		});
	} catch (e) {
		if (e instanceof SignUpRace) return { ok: false, reason: e.reason };
		// Two links racing for one address or one web address: the unique index decides and the
		// transaction (token use included) is rolled back.
		if ((e as { code?: string; constraint?: string }).code === '23505') {
			const c = (e as { constraint?: string }).constraint ?? '';
			return { ok: false, reason: /slug/.test(c) ? 'slug-taken' : 'account-exists' };
		}
		throw e;
	}
}

class SignUpRace extends Error {
	constructor(readonly reason: SignUpProblem) {
		super(reason);
	}
}

export const SIGNUP_PROBLEM: Record<SignUpProblem | 'password', string> = {
	unknown: 'This link is not valid. Start the shop again to get a new one.',
	expired: `This link has expired (links work for ${SIGNUP_HOURS} hours). Start the shop again to get a new one.`,
	used: 'This link has already been used. Sign in to reach your shop.',
	'account-exists':
		'This e-mail has an account now. Sign in, then start the new shop from your shop list.',
	'slug-taken':
		'The web address chosen for this shop has been taken since. Start the shop again with another address.',
	password: 'That is not the password you chose when you started the shop. Try again.'
};
