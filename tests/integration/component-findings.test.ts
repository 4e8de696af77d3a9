import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toolRegisterSchema } from '$lib/schemas/components';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine } from '$lib/server/offsets/machine-state';
import { recordToolRegister } from '$lib/server/components/tool-registers';
import { fleetBoard } from '$lib/server/fleet/board';
import { runShopCheck } from '$lib/server/fleet/check';
import { digestFindings, renderDigest } from '$lib/server/fleet/digest';
import type { ShopInfo } from '$lib/server/shops/queries';
import { testDb, uniqueSuffix } from './db';
import { newTestMill } from './test-mill';

/**
 * Findings on the components beside Z (issue 20) reach the shop check, the fleet board and the
 * digest like Z's own: a wear value past the limit is a Stop on the board and in the e-mail,
 * keeps its acknowledgement through a re-check, and goes as soon as the wear is fixed.
 */
const knex: Knex = testDb();
const DAY = 86_400_000;
let shop: ShopRef;
let actor: { id: number; email: string };
let machineId: number;

const info = (): ShopInfo => ({ ...shop, timeZone: 'UTC' }) as ShopInfo;
const open = () =>
	withShop(
		shop,
		(trx) => trx('findings').where({ machine_id: machineId }).whereNot('status', 'resolved'),
		knex
	);
const version = (v: Record<string, unknown>, daysAgo: number) =>
	withShop(
		shop,
		(trx) =>
			trx('offset_component_versions').insert({
				machine_id: machineId,
				units: 'inch',
				source: 'entered',
				created_by: actor.id,
				created_at: new Date(Date.now() - daysAgo * DAY),
				...v
			}),
		knex
	);

beforeAll(async () => {
	({ shop, actor, machineId } = await newTestMill(knex, {
		slug: 'comp-findings',
		person: 'Lead',
		shopName: 'Component Findings',
		machineName: 'Wear Mill',
		referenceDaysAgo: 20
	}));
	await withShop(
		shop,
		async (trx) => {
			const [t] = await trx('tools')
				.insert({ machine_id: machineId, t_number: 3, h_number: 3, description: '1/2 end mill' })
				.returning('id');
			const [r] = await trx('readings')
				.insert({
					machine_id: machineId,
					kind: 'tool-touch',
					tool_id: t.id,
					machine_z: -10,
					block_height: 3,
					reference_version: 1
				})
				.returning('id');
			await trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: '3',
				value: -7,
				units: 'inch',
				convention: 'reference-touch',
				reading_id: r.id,
				reference_version: 1
			});
			await trx('fixtures').insert({ machine_id: machineId, register: 'G54', name: 'Vise' });
		},
		knex
	);
	// H3 length wear 0.0150 in: past the default limit of 0.0100 in (shop policy).
	await version(
		{ register_kind: 'tool', register: '3', component: 'length-wear', value: -0.015 },
		1
	);
	// G54 X recorded 10 days ago (limit 7), then the sign dropped (a slip, Stop).
	await version({ register_kind: 'work', register: 'G54', component: 'x', value: -5.1234 }, 12);
	await version({ register_kind: 'work', register: 'G54', component: 'x', value: 5.1234 }, 10);
});

afterAll(async () => {
	await knex.destroy();
});

describe('component findings in the shop check', () => {
	it('stores wear past the limit, a slipped X and a stale X with the machine', async () => {
		const summary = await runShopCheck(info(), {
			jobId: `comp-${uniqueSuffix()}`,
			trigger: 'manual'
		});
		expect(summary.opened).toBe(3);
		const rows = await open();
		const by = (kind: string) => rows.find((r) => r.kind === kind);
		expect(by('wear-limit')).toMatchObject({ severity: 'stop', subject: 'H3 length wear' });
		expect(by('wear-limit').message).toMatch(/-0\.0150 in is beyond the shop's limit of 0\.0100/);
		expect(by('sign-flip')).toMatchObject({ severity: 'stop', subject: 'G54 X' });
		expect(by('stale-age')).toMatchObject({ severity: 'caution', subject: 'G54 X' });
	});

	it('shows a Stop on the fleet board and in the digest, with the plain title', async () => {
		const board = await withShop(shop, (trx) => fleetBoard(trx), knex);
		const m = board.machines.find((x) => x.id === machineId)!;
		expect(m.health).toBe('stop');
		expect(m.findings.stop).toBe(2);
		expect(m.findings.caution).toBe(1);
		expect(m.reason).toBe(
			"2 stop findings: Minus sign probably added or dropped; Wear beyond the shop's limit"
		);

		const list = await withShop(shop, (trx) => digestFindings(trx, new Date()), knex);
		const wear = list.find((f) => f.subject === 'H3 length wear');
		expect(wear).toMatchObject({ severity: 'stop', title: "Wear beyond the shop's limit" });
		const mail = renderDigest({ slug: 'x', name: 'Component Findings' }, '2026-12-03', list);
		expect(mail.text).toContain("[⛔ Stop · new] H3 length wear — Wear beyond the shop's limit");
		expect(mail.subject).toContain('(2 marked Stop)');
	});

	it('keeps an acknowledgement through the next check, and resolves when the wear is fixed', async () => {
		await withShop(
			shop,
			(trx) =>
				trx('findings').where({ machine_id: machineId, kind: 'wear-limit' }).update({
					status: 'acknowledged',
					acknowledged_by: actor.id,
					acknowledged_at: new Date()
				}),
			knex
		);
		await runShopCheck(info(), { jobId: `comp-${uniqueSuffix()}`, trigger: 'manual' });
		expect((await open()).find((r) => r.kind === 'wear-limit')?.status).toBe('acknowledged');

		// A lead moves the correction into the geometry: the wear goes back to a small value
		// and the finding goes at once (the write re-runs the machine's checks).
		await withShop(
			shop,
			async (trx) =>
				recordToolRegister(
					trx,
					(await getMachine(trx, machineId))!,
					toolRegisterSchema.parse({ h: '3', component: 'length-wear', value: '0.0005' }),
					actor
				),
			knex
		);
		const rows = await open();
		expect(rows.map((r) => r.kind).sort()).toEqual(['sign-flip', 'stale-age']);
		const resolved = await withShop(
			shop,
			(trx) => trx('findings').where({ machine_id: machineId, kind: 'wear-limit' }).first(),
			knex
		);
		expect(resolved.status).toBe('resolved');
		expect(resolved.comment).toMatch(/resolved by the new value of H3 length wear/);
	});
});
