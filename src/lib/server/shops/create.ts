import type { Knex } from 'knex';
import { audit } from '../audit';
import { hashPassword } from '../auth/password';
import { provisionShop, type ProvisionedShop } from './provision';
import { enterShop, leaveShop } from '../db/roles';

export interface NewOwner {
	/** An existing account, or the details of a new one. */
	userId?: number;
	name?: string;
	email: string;
	password?: string;
	/** A password hashed already (a confirmed sign-up keeps only the hash). */
	passwordHash?: string;
}

/**
 * Sign-up in one transaction: the person's account (when new), the shop's row, its schema with
 * every shop migration, the owner's membership and the first audit entry. Any failure rolls
 * all of it back.
 */
export async function createShopWithOwner(
	knex: Knex,
	shop: { name: string; slug: string },
	owner: NewOwner,
	ip = ''
): Promise<{ shop: ProvisionedShop; userId: number }> {
	const passwordHash =
		owner.passwordHash ?? (owner.password ? await hashPassword(owner.password) : null);
	return knex.transaction(async (trx) => {
		let userId = owner.userId;
		if (!userId) {
			const [u] = await trx('public.users')
				.insert({
					email: owner.email.trim(),
					name: owner.name ?? owner.email,
					password_hash: passwordHash
				})
				.returning('id');
			userId = Number(u.id);
		}
		const created = await provisionShop(trx, shop, async (inner, s) => {
			await inner('public.memberships').insert({ user_id: userId, shop_id: s.id, role: 'owner' });
			await enterShop(inner, s.schemaName);
			await audit(inner, {
				actorUserId: userId,
				actorEmail: owner.email,
				action: 'shop.created',
				target: s.slug,
				detail: { name: s.name },
				ip
			});
			await leaveShop(inner);
		});
		return { shop: created, userId: userId! };
	});
}
