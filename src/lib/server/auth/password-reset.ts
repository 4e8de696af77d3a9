import type { Knex } from 'knex';
import { config } from '../config';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { findUserByEmail } from '../users';
import { hashPassword } from './password';
import { hashToken, newToken } from './tokens';

export const RESET_MINUTES = 60;

/**
 * Starts a password reset. Sends a single-use link when the e-mail has an account and does
 * nothing otherwise; the caller shows the same message either way (no account enumeration).
 */
export async function requestPasswordReset(knex: Knex, email: string): Promise<{ token?: string }> {
	const user = await findUserByEmail(knex, email);
	if (!user) return {};
	const { token, hash } = newToken();
	await knex('public.password_resets').insert({
		user_id: user.id,
		token_hash: hash,
		expires_at: new Date(Date.now() + RESET_MINUTES * 60_000)
	});
	const mail = renderEmail({
		subject: 'Reset your Datumkeep password',
		paragraphs: [
			`Someone (hopefully you) asked to reset the password for ${user.email}.`,
			`The link works once and expires in ${RESET_MINUTES} minutes. If you did not ask, ignore this e-mail: your password stays as it is.`
		],
		action: { label: 'Choose a new password', url: `${config.origin}/reset/${token}` }
	});
	await sendEmail(knex, { ...mail, to: user.email, kind: 'password-reset' });
	return { token };
}

export type ResetCheck =
	{ ok: true; userId: number } | { ok: false; reason: 'unknown' | 'expired' | 'used' };

export async function checkResetToken(knex: Knex, token: string): Promise<ResetCheck> {
	const r = await knex('public.password_resets')
		.where({ token_hash: hashToken(token) })
		.first('user_id', 'expires_at', 'used_at');
	if (!r) return { ok: false, reason: 'unknown' };
	if (r.used_at) return { ok: false, reason: 'used' };
	if (new Date(r.expires_at).getTime() < Date.now()) return { ok: false, reason: 'expired' };
	return { ok: true, userId: Number(r.user_id) };
}

/** Sets the new password and uses up this token and every other open one of the same person. */
export async function completePasswordReset(
	knex: Knex,
	token: string,
	password: string
): Promise<ResetCheck> {
	const passwordHash = await hashPassword(password);
	return knex.transaction(async (trx) => {
		const [row] = await trx('public.password_resets')
			.where({ token_hash: hashToken(token) })
			.whereNull('used_at')
			.where('expires_at', '>', trx.fn.now())
			.update({ used_at: trx.fn.now() })
			.returning('user_id');
		if (!row) {
			const again = await checkResetToken(trx as unknown as Knex, token);
			return again.ok ? { ok: false, reason: 'used' } : again;
		}
		// A new password ends every session signed in with the old one (session generation).
		await trx('public.users')
			.where({ id: row.user_id })
			.update({
				password_hash: passwordHash,
				session_generation: trx.raw('session_generation + 1')
			});
		await trx('public.password_resets')
			.where({ user_id: row.user_id })
			.whereNull('used_at')
			.update({ used_at: trx.fn.now() });
		return { ok: true, userId: Number(row.user_id) };
	});
}

export const TOKEN_PROBLEM: Record<'unknown' | 'expired' | 'used', string> = {
	unknown: 'This link is not valid. Ask for a new one.',
	expired: 'This link has expired. Ask for a new one.',
	used: 'This link has already been used. Ask for a new one if you still need it.'
};
