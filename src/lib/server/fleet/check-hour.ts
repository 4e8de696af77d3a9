import type { Knex } from 'knex';
import { audit } from '../audit';
import type { ShopRow } from '../db/tables';
import { withShop } from '../db/tenant';
import type { Member } from '../guard';
import type { ShopInfo } from '../shops/queries';

/** The local hour (0–23, the shop's time zone) of the shop's nightly check. */
export async function readCheckHour(knex: Knex, shopId: number): Promise<number> {
	const row: Pick<ShopRow, 'check_hour'> = await knex('public.shops')
		.where({ id: shopId })
		.first('check_hour');
	return Number(row.check_hour);
}

/**
 * Moves the nightly check to another local hour and writes it to the shop's audit log. The
 * queue's repeatable job is moved by the caller (`rescheduleShop`): the hour is saved even when
 * Redis cannot be reached, and the worker picks it up when it is back.
 */
export async function saveCheckHour(
	knex: Knex,
	shop: ShopInfo,
	hour: number,
	by: Member['user'],
	ip: string
): Promise<void> {
	await knex('public.shops').where({ id: shop.id }).update({ check_hour: hour });
	await withShop(
		shop,
		(trx) =>
			audit(trx, {
				actorUserId: by.id,
				actorEmail: by.email,
				action: 'check.schedule',
				target: `shop:${shop.id}`,
				detail: { hour, timeZone: shop.timeZone },
				ip
			}),
		knex
	);
}
