import type { Knex } from 'knex';
import { isoOrNull } from '../db/convert';
import type { Role } from '$lib/permissions';
import type { ShopRow } from '../db/tables';
import type { ShopRef } from '../db/tenant';
import { HOME_SERVER } from '../db/servers';

export interface ShopInfo extends ShopRef {
	slug: string;
	name: string;
	timeZone: string;
	/** Set while the shop waits out its deletion grace period (read-only until restored). */
	deletionPurgeAfter?: string | null;
	/** Set (to the target server's name) while `npm run shop:move` moves it: read-only. */
	movingTo?: string | null;
}

export interface MembershipView {
	shop: ShopInfo;
	role: Role;
}

/** A member's shop always has its schema (purging removes the memberships with it). */
function toShop(
	r: Pick<ShopRow, 'id' | 'slug' | 'name' | 'time_zone'> &
		Partial<Pick<ShopRow, 'purge_after'>> & {
			schema_name: string;
			server?: string | null;
			moving_to?: string | null;
		}
): ShopInfo {
	return {
		id: Number(r.id),
		slug: r.slug,
		name: r.name,
		schemaName: r.schema_name,
		timeZone: r.time_zone,
		deletionPurgeAfter: isoOrNull(r.purge_after),
		server: r.server ?? HOME_SERVER,
		movingTo: r.moving_to ?? null
	};
}

/** The user's membership in the shop with this slug, or undefined (not a member, or no such shop). */
export async function findMembership(
	knex: Knex,
	userId: number,
	slug: string
): Promise<MembershipView | undefined> {
	const row = await knex('public.memberships as m')
		.join('public.shops as s', 's.id', 'm.shop_id')
		.leftJoin('public.shop_servers as ss', 'ss.shop_id', 's.id')
		.where({ 'm.user_id': userId, 's.slug': slug })
		.first(
			's.id',
			's.slug',
			's.name',
			's.schema_name',
			's.time_zone',
			's.purge_after',
			'ss.server',
			'ss.moving_to',
			'm.role'
		);
	return row ? { shop: toShop(row), role: row.role } : undefined;
}

/** Every shop the user belongs to, for the shop switcher. */
export async function listMemberships(knex: Knex, userId: number): Promise<MembershipView[]> {
	const rows = await knex('public.memberships as m')
		.join('public.shops as s', 's.id', 'm.shop_id')
		.leftJoin('public.shop_servers as ss', 'ss.shop_id', 's.id')
		.where({ 'm.user_id': userId })
		.orderBy('s.name')
		.select('s.id', 's.slug', 's.name', 's.schema_name', 's.time_zone', 'ss.server', 'm.role');
	return rows.map((r) => ({ shop: toShop(r), role: r.role }));
}

export async function slugTaken(knex: Knex, slug: string): Promise<boolean> {
	return !!(await knex('public.shops').where({ slug }).first('id'));
}
