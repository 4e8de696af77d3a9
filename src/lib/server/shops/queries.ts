import type { Knex } from 'knex';
import { isoOrNull } from '../db/convert';
import type { Role } from '$lib/permissions';
import type { ShopRow } from '../db/tables';
import type { ShopRef } from '../db/tenant';

export interface ShopInfo extends ShopRef {
	slug: string;
	name: string;
	timeZone: string;
	/** Set while the shop waits out its deletion grace period (read-only until restored). */
	deletionPurgeAfter?: string | null;
}

export interface MembershipView {
	shop: ShopInfo;
	role: Role;
}

/** A member's shop always has its schema (purging removes the memberships with it). */
function toShop(
	r: Pick<ShopRow, 'id' | 'slug' | 'name' | 'time_zone'> &
		Partial<Pick<ShopRow, 'purge_after'>> & { schema_name: string }
): ShopInfo {
	return {
		id: Number(r.id),
		slug: r.slug,
		name: r.name,
		schemaName: r.schema_name,
		timeZone: r.time_zone,
		deletionPurgeAfter: isoOrNull(r.purge_after)
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
		.where({ 'm.user_id': userId, 's.slug': slug })
		.first('s.id', 's.slug', 's.name', 's.schema_name', 's.time_zone', 's.purge_after', 'm.role');
	return row ? { shop: toShop(row), role: row.role } : undefined;
}

/** Every shop the user belongs to, for the shop switcher. */
export async function listMemberships(knex: Knex, userId: number): Promise<MembershipView[]> {
	const rows = await knex('public.memberships as m')
		.join('public.shops as s', 's.id', 'm.shop_id')
		.where({ 'm.user_id': userId })
		.orderBy('s.name')
		.select('s.id', 's.slug', 's.name', 's.schema_name', 's.time_zone', 'm.role');
	return rows.map((r) => ({ shop: toShop(r), role: r.role }));
}

export async function slugTaken(knex: Knex, slug: string): Promise<boolean> {
	return !!(await knex('public.shops').where({ slug }).first('id'));
}
