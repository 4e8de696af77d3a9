import type { Knex } from 'knex';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { provisionShop } from '$lib/server/shops/provision';
import { uniqueSuffix } from './db';

const DAY = 86_400_000;

/**
 * A shop of its own for one test file (the demo data is never touched): a member to act as,
 * and one inch mill (20 in Z travel, 0.0001 in resolution) with reference version 1 — a
 * 3.0000 in 1-2-3 block established `referenceDaysAgo` days ago. Tools, fixtures and readings
 * are each file's own.
 */
export async function newTestMill(
	knex: Knex,
	o: {
		slug: string;
		person: string;
		shopName: string;
		machineName: string;
		referenceDaysAgo: number;
	}
): Promise<{ shop: ShopRef; actor: { id: number; email: string }; machineId: number }> {
	const email = `${o.slug}-${uniqueSuffix()}@example.test`;
	const [u] = await knex('users').insert({ email, name: o.person }).returning('id');
	const shop = await provisionShop(knex, { name: o.shopName, slug: `${o.slug}-${uniqueSuffix()}` });
	const machineId = await withShop(
		shop,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: o.machineName, units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			await trx('reference_surfaces').insert({
				machine_id: m.id,
				version: 1,
				instrument: '1-2-3 block',
				height: 3,
				established_at: new Date(Date.now() - o.referenceDaysAgo * DAY)
			});
			return Number(m.id);
		},
		knex
	);
	return { shop, actor: { id: Number(u.id), email }, machineId };
}
