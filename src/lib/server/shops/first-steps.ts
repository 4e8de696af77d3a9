/**
 * The first-steps guide of a new shop (issue 18): add a machine → record its reference → touch
 * off tools → first setup → invite the crew. Each step is "done" from what the shop's data
 * holds, so it ticks itself off; the guide shows until all are done or someone puts it away.
 */
import type { Knex } from 'knex';
import { withShop, type ShopRef } from '../db/tenant';

export interface FirstSteps {
	dismissed: boolean;
	/** The first machine, for the links of the steps that happen on a machine. */
	machineId: number | null;
	steps: { key: 'machine' | 'reference' | 'touch-off' | 'setup' | 'crew'; done: boolean }[];
}

export async function firstSteps(knex: Knex, shop: ShopRef): Promise<FirstSteps> {
	const row = await knex('public.shops').where({ id: shop.id }).first('first_steps_dismissed_at');
	const crew = await knex.raw(
		`select (select count(*) from public.memberships where shop_id = :id)::int as members,
			(select count(*) from public.invitations where shop_id = :id and revoked_at is null)::int as invited`,
		{ id: shop.id }
	);
	const data = await withShop(
		shop,
		async (trx) => {
			const first = await trx('machines').whereNull('archived_at').orderBy('id').first('id');
			const has = async (table: string, where?: Record<string, unknown>) =>
				!!(await trx(table)
					.where(where ?? {})
					.first(trx.raw('1 as one')));
			return {
				machineId: first ? Number(first.id) : null,
				machine: !!first,
				reference: await has('reference_surfaces'),
				touchOff: await has('readings', { kind: 'tool-touch' }),
				setup: await has('setups')
			};
		},
		knex
	);
	const { members, invited } = crew.rows[0];
	return {
		dismissed: !!row?.first_steps_dismissed_at,
		machineId: data.machineId,
		steps: [
			{ key: 'machine', done: data.machine },
			{ key: 'reference', done: data.reference },
			{ key: 'touch-off', done: data.touchOff },
			{ key: 'setup', done: data.setup },
			{ key: 'crew', done: members > 1 || invited > 0 }
		]
	};
}

export async function dismissFirstSteps(knex: Knex, shopId: number): Promise<void> {
	await knex('public.shops')
		.where({ id: shopId })
		.whereNull('first_steps_dismissed_at')
		.update({ first_steps_dismissed_at: knex.fn.now() });
}
