/**
 * Handing ownership to another member (issue 18). The owner confirms with their password; the
 * new owner gets the owner role and the old one becomes an admin, in one transaction that also
 * writes the shop's audit log and the public lifecycle log. Both people get an e-mail.
 */
import type { Knex } from 'knex';
import { audit } from '../audit';
import { enterShop } from '../db/roles';
import { verifyPassword } from '../auth/password';
import { config } from '../config';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import type { ShopRef } from '../db/tenant';
import { logLifecycle } from '../shops/lifecycle';

export type TransferResult =
	| { ok: true; to: { name: string; email: string } }
	| { ok: false; field: 'password' | 'membershipId'; message: string };

export async function transferOwnership(
	knex: Knex,
	shop: ShopRef & { slug: string; name: string },
	from: { id: number; email: string; name: string },
	toMembershipId: number,
	password: string,
	ip = ''
): Promise<TransferResult> {
	const user = await knex('public.users').where({ id: from.id }).first('password_hash');
	if (!(await verifyPassword(password, user?.password_hash))) {
		return {
			ok: false,
			field: 'password',
			message: 'That password is not right: nothing changed.'
		};
	}
	const result = await knex.transaction(async (trx): Promise<TransferResult> => {
		const rows = await trx('public.memberships as m')
			.join('public.users as u', 'u.id', 'm.user_id')
			.where('m.shop_id', shop.id)
			.forUpdate()
			.select('m.id', 'm.user_id', 'm.role', 'u.name', 'u.email');
		const me = rows.find((r) => Number(r.user_id) === from.id);
		const target = rows.find((r) => Number(r.id) === toMembershipId);
		if (!me || me.role !== 'owner') {
			return {
				ok: false,
				field: 'membershipId',
				message: 'Only an owner can hand over ownership.'
			};
		}
		if (!target) {
			return {
				ok: false,
				field: 'membershipId',
				message: 'That person is not a member of this shop.'
			};
		}
		if (Number(target.user_id) === from.id) {
			return { ok: false, field: 'membershipId', message: 'Choose someone other than yourself.' };
		}
		await trx('public.memberships').where({ id: target.id }).update({ role: 'owner' });
		await trx('public.memberships').where({ id: me.id }).update({ role: 'admin' });
		await logLifecycle(trx, {
			shopId: shop.id,
			shopSlug: shop.slug,
			action: 'ownership.transferred',
			actorUserId: from.id,
			actorEmail: from.email,
			detail: { toUserId: Number(target.user_id), to: target.email, previousRole: target.role }
		});
		await enterShop(trx, shop.schemaName);
		await audit(trx, {
			actorUserId: from.id,
			actorEmail: from.email,
			action: 'ownership.transferred',
			target: target.email,
			detail: {
				from: from.email,
				to: target.email,
				previousRole: target.role,
				fromNowRole: 'admin'
			},
			ip
		});
		return { ok: true, to: { name: target.name, email: target.email } };
	});
	if (!result.ok) return result;
	const url = `${config.origin}/shops/${shop.slug}/members`;
	const toNew = renderEmail({
		subject: `You are now the owner of ${shop.name} on Datumkeep`,
		paragraphs: [
			`Hello ${result.to.name},`,
			`${from.name} (${from.email}) has handed ownership of ${shop.name} to you. As an owner you look after billing and members, and only an owner can export or delete the shop.`,
			`${from.name} stays in the shop as an admin.`
		],
		action: { label: 'Open Members', url }
	});
	const toOld = renderEmail({
		subject: `You handed ownership of ${shop.name} to ${result.to.name}`,
		paragraphs: [
			`Hello ${from.name},`,
			`You handed ownership of ${shop.name} to ${result.to.name} (${result.to.email}). You are now an admin of the shop.`,
			'If you did not do this, reply to this e-mail or ask the new owner at once.'
		],
		action: { label: 'Open Members', url }
	});
	const stamp = Date.now();
	await sendEmail(knex, {
		to: result.to.email,
		...toNew,
		kind: 'ownership.transferred',
		shopId: shop.id,
		dedupeKey: `ownership:${shop.id}:${stamp}:new`
	});
	await sendEmail(knex, {
		to: from.email,
		...toOld,
		kind: 'ownership.transferred',
		shopId: shop.id,
		dedupeKey: `ownership:${shop.id}:${stamp}:old`
	});
	return result;
}
