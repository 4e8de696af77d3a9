import type { Knex } from 'knex';
import { afterAll, describe, expect, it } from 'vitest';
import { hashPassword } from '$lib/server/auth/password';
import { withShop } from '$lib/server/db/tenant';
import { listMembers, removeMember } from '$lib/server/members/members';
import { transferOwnership } from '$lib/server/members/transfer';
import { getMachine, machineState } from '$lib/server/offsets/machine-state';
import { createShopWithOwner } from '$lib/server/shops/create';
import { formerMembership } from '$lib/server/shops/lifecycle';
import { defaultUnits, readSettings, saveSettings } from '$lib/server/shops/settings';
import { testDb, uniqueSuffix } from './db';
import { insertTwoFixtureMill } from './two-fixture-mill';

/** Shop settings and people (issue 18) against the real PostgreSQL. */
const knex: Knex = testDb();
afterAll(() => knex.destroy());

async function newShop() {
	const email = `settings-${uniqueSuffix()}@example.test`;
	const { shop, userId } = await createShopWithOwner(
		knex,
		{ name: 'Settings Works', slug: `settings-${uniqueSuffix()}` },
		{ name: 'Sue Owner', email, password: 'correct-horse-1' }
	);
	return { shop, by: { id: userId, email, name: 'Sue Owner' } };
}

describe('shop settings', () => {
	it('saves, audits each changed field with old and new value, and the checks use the limits', async () => {
		const { shop, by } = await newShop();
		const machineId = await withShop(
			shop,
			async (trx) => (await insertTwoFixtureMill(trx)).id,
			knex
		);
		const tenDaysOn = new Date(Date.now() + 10 * 86_400_000);
		const staleWork = async () =>
			withShop(
				shop,
				async (trx) => {
					const m = (await getMachine(trx, machineId))!;
					const { findings } = await machineState(trx, m, tenDaysOn);
					return findings.filter((f) => f.kind === 'stale-age').length;
				},
				knex
			);
		// Our default: work offsets are old after 7 days (src/lib/offsets/policy.ts).
		expect(await staleWork()).toBeGreaterThan(0);

		const before = await readSettings(knex, shop.id);
		expect(before).toMatchObject({ timeZone: 'UTC', defaultUnits: 'inch', checkHour: 2 });
		const r = await saveSettings(
			knex,
			shop,
			{
				...before,
				timeZone: 'America/Chicago',
				defaultUnits: 'mm',
				jumpTolerance: 0.05,
				workMaxAgeDays: 14,
				toolMaxAgeDays: 60
			},
			by
		);
		expect(r.changed.sort()).toEqual(
			['defaultUnits', 'jumpTolerance', 'timeZone', 'toolMaxAgeDays', 'workMaxAgeDays'].sort()
		);
		expect(await defaultUnits(knex, shop.id)).toBe('mm');
		expect(await staleWork()).toBe(0);
		const audits = await withShop(
			shop,
			(trx) => trx('audit_log').where({ action: 'settings.changed' }).select('target', 'detail'),
			knex
		);
		expect(audits.find((a) => a.target === 'timeZone')?.detail).toEqual({
			field: 'timeZone',
			from: 'UTC',
			to: 'America/Chicago'
		});
		// Saving the same values again writes nothing.
		const again = await saveSettings(knex, shop, await readSettings(knex, shop.id), by);
		expect(again.changed).toEqual([]);
		const count = await withShop(
			shop,
			(trx) => trx('audit_log').where({ action: 'settings.changed' }).count({ n: '*' }),
			knex
		);
		expect(Number(count[0].n)).toBe(5);
	});
});

describe('people', () => {
	async function addMember(shopId: number, name: string, role: string) {
		const email = `${name.toLowerCase()}-${uniqueSuffix()}@example.test`;
		const [u] = await knex('users')
			.insert({ email, name, password_hash: await hashPassword('correct-horse-2') })
			.returning('id');
		const [m] = await knex('memberships')
			.insert({ user_id: u.id, shop_id: shopId, role })
			.returning('id');
		return { userId: Number(u.id), membershipId: Number(m.id), email };
	}

	it('a removed member is remembered as removed (and only they are told)', async () => {
		const { shop, by } = await newShop();
		const op = await addMember(shop.id, 'Otto', 'operator');
		expect(await formerMembership(knex, op.userId, shop.slug)).toBeUndefined();
		const r = await removeMember(knex, shop, op.membershipId, { ...by, role: 'owner' });
		expect(r).toEqual({ ok: true, name: 'Otto' });
		expect(await formerMembership(knex, op.userId, shop.slug)).toMatchObject({
			shopName: 'Settings Works',
			reason: 'removed'
		});
		expect(await formerMembership(knex, by.id, shop.slug)).toBeUndefined();
	});

	it('lists members by name, so a role change does not move a row', async () => {
		const { shop, by } = await newShop();
		await addMember(shop.id, 'Zed', 'operator');
		await addMember(shop.id, 'Abe', 'lead');
		const names = (await listMembers(knex, shop.id)).map((m) => m.name);
		expect(names).toEqual(['Abe', 'Sue Owner', 'Zed']);
		expect(by.name).toBe('Sue Owner');
	});

	it('hands ownership over only with the right password, audited in both logs', async () => {
		const { shop, by } = await newShop();
		const lead = await addMember(shop.id, 'Lou', 'lead');
		const wrong = await transferOwnership(knex, shop, by, lead.membershipId, 'wrong-password-1');
		expect(wrong).toMatchObject({ ok: false, field: 'password' });
		const self = await knex('memberships').where({ shop_id: shop.id, user_id: by.id }).first('id');
		expect(
			await transferOwnership(knex, shop, by, Number(self.id), 'correct-horse-1')
		).toMatchObject({ ok: false, field: 'membershipId' });
		const roles = async () =>
			Object.fromEntries(
				(await knex('memberships').where({ shop_id: shop.id }).select('user_id', 'role')).map(
					(r) => [Number(r.user_id), r.role]
				)
			);
		expect(await roles()).toEqual({ [by.id]: 'owner', [lead.userId]: 'lead' });
		const ok = await transferOwnership(knex, shop, by, lead.membershipId, 'correct-horse-1');
		expect(ok).toMatchObject({ ok: true, to: { name: 'Lou' } });
		expect(await roles()).toEqual({ [by.id]: 'admin', [lead.userId]: 'owner' });
		const logged = await withShop(
			shop,
			(trx) => trx('audit_log').where({ action: 'ownership.transferred' }).count({ n: '*' }),
			knex
		);
		expect(Number(logged[0].n)).toBe(1);
		expect(
			await knex('shop_lifecycle_log')
				.where({ shop_id: shop.id, action: 'ownership.transferred' })
				.count({ n: '*' })
		).toEqual([{ n: '1' }]);
	});
});
