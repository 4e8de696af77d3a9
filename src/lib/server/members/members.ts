import type { Knex } from 'knex';
import { endAllSessions } from '../users';
import type { Role } from '$lib/permissions';
import { audit } from '../audit';
import { withShop, type ShopRef } from '../db/tenant';
import { logLifecycle } from '../shops/lifecycle';
import type { Actor } from './invitations';
import { enterShop } from '../db/roles';

export interface MemberView {
	membershipId: number;
	userId: number;
	name: string;
	email: string;
	role: Role;
	since: string;
}

export async function listMembers(knex: Knex, shopId: number): Promise<MemberView[]> {
	const rows = await knex('public.memberships as m')
		.join('public.users as u', 'u.id', 'm.user_id')
		.where('m.shop_id', shopId)
		// By name, not by role: a role change must not move the row under the pointer (issue 18).
		.orderByRaw('lower(u.name), m.id')
		.select('m.id', 'u.id as user_id', 'u.name', 'u.email', 'm.role', 'm.created_at');
	return rows.map((r) => ({
		membershipId: Number(r.id),
		userId: Number(r.user_id),
		name: r.name,
		email: r.email,
		role: r.role,
		since: new Date(r.created_at).toISOString()
	}));
}

export type MemberChangeResult = { ok: true; name?: string } | { ok: false; message: string };

/**
 * Locks the shop's owner memberships (so two demotions or removals cannot both see "another
 * owner is left") and reads the member being changed.
 */
async function lockOwnersAndFind(trx: Knex.Transaction, shop: ShopRef, membershipId: number) {
	const owners = await trx('public.memberships')
		.where({ shop_id: shop.id, role: 'owner' })
		.forUpdate()
		.select('id');
	const target: { role: Role; email: string; user_id: string; name: string } | undefined =
		await trx('public.memberships as m')
			.join('public.users as u', 'u.id', 'm.user_id')
			.where({ 'm.id': membershipId, 'm.shop_id': shop.id })
			.first('m.role', 'u.email', 'u.id as user_id', 'u.name');
	return { ownerCount: owners.length, target };
}

/**
 * Changes a member's role. Rules: only an owner may make someone an owner or change an owner's
 * role (ownership is the owner's to give), and the shop always keeps at least one owner. The
 * owner count is read under a row lock so two demotions cannot both pass.
 */
export async function changeRole(
	knex: Knex,
	shop: ShopRef,
	membershipId: number,
	newRole: Role,
	by: Actor & { role: Role },
	ip = ''
): Promise<MemberChangeResult> {
	return knex.transaction(async (trx) => {
		const { ownerCount, target } = await lockOwnersAndFind(trx, shop, membershipId);
		if (!target) return { ok: false, message: 'That person is not a member of this shop.' };
		if (target.role === newRole) return { ok: true };
		if ((newRole === 'owner' || target.role === 'owner') && by.role !== 'owner') {
			return { ok: false, message: 'Only an owner can give or take away the owner role.' };
		}
		if (target.role === 'owner' && ownerCount <= 1) {
			return {
				ok: false,
				message: `${target.email} is the last owner. Make someone else an owner first.`
			};
		}
		await trx('public.memberships').where({ id: membershipId }).update({ role: newRole });
		await enterShop(trx, shop.schemaName);
		await audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'member.role-changed',
			target: target.email,
			detail: { from: target.role, to: newRole },
			ip
		});
		return { ok: true };
	});
}

/** Removes a member from the shop (their account stays). The last owner cannot be removed. */
export async function removeMember(
	knex: Knex,
	shop: ShopRef,
	membershipId: number,
	by: Actor & { role: Role },
	ip = ''
): Promise<MemberChangeResult> {
	return knex.transaction(async (trx) => {
		const { ownerCount, target } = await lockOwnersAndFind(trx, shop, membershipId);
		if (!target) return { ok: false, message: 'That person is not a member of this shop.' };
		if (target.role === 'owner' && by.role !== 'owner') {
			return { ok: false, message: 'Only an owner can remove an owner.' };
		}
		if (target.role === 'owner' && ownerCount <= 1) {
			return { ok: false, message: `${target.email} is the last owner and cannot be removed.` };
		}
		await trx('public.memberships').where({ id: membershipId }).del();
		// Remembered in public so the removed person is told why the shop is gone from them.
		const { slug } = await trx('public.shops').where({ id: shop.id }).first('slug');
		await logLifecycle(trx, {
			shopId: shop.id,
			shopSlug: slug,
			action: 'member.removed',
			actorUserId: by.id,
			actorEmail: by.email,
			detail: { userId: Number(target.user_id), email: target.email, role: target.role }
		});
		// Their open sessions end at once (session generation), not only this shop's access.
		await endAllSessions(trx, Number(target.user_id));
		await enterShop(trx, shop.schemaName);
		await audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'member.removed',
			target: target.email,
			detail: { role: target.role },
			ip
		});
		return { ok: true, name: target.name };
	});
}

export interface AuditFilter {
	/** The actor's e-mail, exactly as logged. */
	actor?: string;
	/** The entry's kind (action code). */
	action?: string;
	limit?: number;
}

/** Newest first, optionally one person's and/or one kind's entries. */
export async function readAuditLog(shop: ShopRef, filter: AuditFilter = {}) {
	return withShop(shop, async (trx) => {
		const q = trx('audit_log')
			.orderBy('at', 'desc')
			.orderBy('id', 'desc')
			.limit(filter.limit ?? 200)
			.select('*');
		if (filter.actor) q.where('actor_email', filter.actor);
		if (filter.action) q.where('action', filter.action);
		const rows = await q;
		return rows.map((r) => ({
			id: Number(r.id),
			at: new Date(r.at).toISOString(),
			actorEmail: r.actor_email as string,
			action: r.action as string,
			target: r.target as string,
			detail: r.detail as Record<string, unknown>,
			ip: r.ip as string
		}));
	});
}

/** The people and kinds that occur in the shop's log, for the filter lists. */
export async function auditFilterOptions(shop: ShopRef) {
	return withShop(shop, async (trx) => {
		const [actors, actions] = await Promise.all([
			trx('audit_log').distinct('actor_email').orderBy('actor_email').pluck('actor_email'),
			trx('audit_log').distinct('action').orderBy('action').pluck('action')
		]);
		return { actors: actors.filter(Boolean) as string[], actions: actions as string[] };
	});
}
