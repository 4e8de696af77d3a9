import type { Knex } from 'knex';
import type { Role } from '$lib/permissions';
import type { ShopRef } from '../db/tenant';

export interface ShopRow extends ShopRef {
	slug: string;
	name: string;
	timeZone: string;
	/** Set while the shop waits out its deletion grace period (read-only until restored). */
	deletionPurgeAfter?: string | null;
}

export interface MembershipView {
	shop: ShopRow;
	role: Role;
}

function toShop(r: {
	id: string | number;
	slug: string;
	name: string;
	schema_name: string;
	time_zone: string;
	purge_after?: Date | string | null;
}): ShopRow {
	return {
		id: Number(r.id),
		slug: r.slug,
		name: r.name,
		schemaName: r.schema_name,
		timeZone: r.time_zone,
		deletionPurgeAfter: r.purge_after ? new Date(r.purge_after).toISOString() : null
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
