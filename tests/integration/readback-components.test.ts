import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { edgeReadingSchema, toolRegisterSchema } from '$lib/schemas/components';
import { readbackSchema } from '$lib/schemas/readback';
import { recordEdgeReading } from '$lib/server/components/edge';
import { recordToolRegister } from '$lib/server/components/tool-registers';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { recordReadback } from '$lib/server/readbacks/record';
import { testDb } from './db';
import { newTestMill } from './test-mill';

/**
 * Read-back beside Z (issue 20) against the real PostgreSQL: a saved control file holding a
 * different G54 X or a different radius wear is stored row by row and raises a read-back
 * mismatch (Stop) on that component; a new value of the component ends it (findings follow the
 * data). Forms read: G10 L2 X/Y (NIST RS274NGC v3 §3.5.5), ISO-style G10 L13 radius wear
 * (ISO-style mill programming manual §1.2.10, SOURCES.md 3).
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string };
let machineId: number;

const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const mismatches = () =>
	withShop(
		shop,
		(trx) => trx('findings').where({ kind: 'readback-mismatch' }).orderBy('id').select('*'),
		knex
	) as Promise<Record<string, never>[]>;

beforeAll(async () => {
	({ shop, actor, machineId } = await newTestMill(knex, {
		slug: 'rbcomp',
		person: 'Rob Back',
		shopName: 'Read-back Components',
		machineName: 'RB Mill',
		referenceDaysAgo: 1
	}));
	await withShop(
		shop,
		async (trx) => {
			await trx('machines').where({ id: machineId }).update({ control_style: 'iso' });
			await trx('tools').insert({
				machine_id: machineId,
				t_number: 3,
				h_number: 3,
				description: 'end mill'
			});
		},
		knex
	);
	// G54 X = -12.4 + 0.1 = -12.3 (edge approached from the minus side, common shop practice).
	await inShop((trx, m) =>
		recordEdgeReading(
			trx,
			m,
			edgeReadingSchema.parse({
				register: 'G54',
				axis: 'X',
				probeDiameter: '0.2000',
				firstCoordinate: '-12.4000',
				firstSide: 'minus'
			}),
			actor
		)
	);
	await inShop((trx, m) =>
		recordToolRegister(
			trx,
			m,
			toolRegisterSchema.parse({ h: '3', component: 'radius-wear', value: '-0.0010' }),
			actor
		)
	);
});
afterAll(() => knex.destroy());

describe('read-back of X/Y and wear', () => {
	it('stores the component rows and raises a mismatch on a different G54 X and H3 radius wear', async () => {
		const file = [
			'G20',
			'G10 L2 P1 X-12.2000 Y0. Z0.',
			'G10 L13 P3 R0.0010', // sign flipped
			'%'
		].join('\n');
		const r = await inShop((trx, m) =>
			recordReadback(
				trx,
				shop.id,
				m,
				actor,
				readbackSchema.parse({ source: 'file', fileName: 'ofs.nc', text: file })
			)
		);
		const x = r.comparison.rows.find((row) => row.label === 'G54 X')!;
		expect(x).toMatchObject({
			component: 'x',
			status: 'different',
			expected: -12.3,
			actual: -12.2
		});
		expect(r.comparison.rows.find((row) => row.label === 'H3 radius wear')).toMatchObject({
			status: 'different',
			expected: -0.001,
			actual: 0.001
		});
		const stored = await withShop(
			shop,
			(trx) =>
				trx('readback_values')
					.where({ readback_id: r.id })
					.whereIn('register_kind', ['x', 'radius-wear'])
					.orderBy('id')
					.select('register_kind', 'register', 'status', 'component_version_id'),
			knex
		);
		expect(stored.map((s) => [s.register_kind, s.register, s.status])).toEqual([
			['x', 'G54', 'different'],
			['radius-wear', '3', 'different']
		]);
		expect(stored.every((s) => s.component_version_id !== null)).toBe(true);
		const open = (await mismatches()).filter((f) => f.status === 'open');
		expect(open.map((f) => f.subject).sort()).toEqual(['G54 X', 'H3 radius wear']);
		expect(open.find((f) => f.subject === 'G54 X')!.message).toContain(
			'holds -12.2000 in, but Datumkeep has -12.3000 in'
		);
	});

	it('a new value of the component resolves its mismatch at once; the other stays', async () => {
		await inShop((trx, m) =>
			recordToolRegister(
				trx,
				m,
				toolRegisterSchema.parse({ h: '3', component: 'radius-wear', value: '0.0010' }),
				actor
			)
		);
		const rows = await mismatches();
		expect(rows.find((f) => f.subject === 'H3 radius wear')!.status).toBe('resolved');
		expect(rows.find((f) => f.subject === 'G54 X')!.status).toBe('open');
	});
});
