import type { Knex } from 'knex';
import type { MembershipRow } from '../db/tables';

/** Whether this member gets the shop's morning digest (on unless they turned it off). */
export async function receivesDigest(knex: Knex, userId: number, shopId: number): Promise<boolean> {
	const row: Pick<MembershipRow, 'digest_opt_out'> | undefined = await knex('public.memberships')
		.where({ user_id: userId, shop_id: shopId })
		.first('digest_opt_out');
	return !row?.digest_opt_out;
}

/** The member's own choice: the morning digest for this shop on or off. */
export async function setReceivesDigest(
	knex: Knex,
	userId: number,
	shopId: number,
	receive: boolean
): Promise<void> {
	await knex('public.memberships')
		.where({ user_id: userId, shop_id: shopId })
		.update({ digest_opt_out: !receive });
}
