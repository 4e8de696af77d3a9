import { randomUUID } from 'node:crypto';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { queuedReadingSchema, type QueuedReading } from '$lib/schemas/queued-reading';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { recordQueuedReading } from '$lib/server/readings/queued';
import { ReadingInputError } from '$lib/server/readings/record';
import { provisionShop } from '$lib/server/shops/provision';
import { testDb, uniqueSuffix } from './db';

/**
 * Readings queued on a device while offline, recorded when they arrive (real PostgreSQL): the
 * same computation as the forms, both times kept, never recorded twice for one key, and not
 * recorded (the operator decides) when the reference or the register changed after measuring.
 */
const knex: Knex = testDb();
let shop: ShopRef;
const slug = `queue-${uniqueSuffix()}`;
let actor: { id: number; email: string };
let mill: { id: number; t2: number };
const MIN = 60_000;

const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, mill.id))!), knex);
const toolQueued = (over: Partial<QueuedReading> & { machineZ?: string } = {}): QueuedReading =>
	queuedReadingSchema.parse({
		clientKey: randomUUID(),
		kind: 'tool',
		toolId: String(mill.t2),
		measuredAt: new Date().toISOString(),
		form: { machineZ: over.machineZ ?? '-14.7504', touchedThrough: 'directly' },
		...over
	});
const record = (q: QueuedReading, now?: Date) =>
	inShop((trx, m) => recordQueuedReading(trx, slug, m, q, actor, now));
const readingsCount = () =>
	withShop(shop, async (trx) => Number((await trx('readings').count('* as n'))[0].n), knex);

beforeAll(async () => {
	const email = `queued-${uniqueSuffix()}@example.test`;
	const [u] = await knex('users').insert({ email, name: 'Quinn Queue' }).returning('id');
	actor = { id: Number(u.id), email };
	shop = await provisionShop(knex, { name: 'Queue Test', slug });
	await withShop(
		shop,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: 'Queue Mill', units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			// Reference set an hour ago: a reading measured 20 minutes ago was taken against it.
			await trx('reference_surfaces').insert({
				machine_id: m.id,
				version: 1,
				instrument: '1-2-3 block',
				height: 3,
				established_at: new Date(Date.now() - 60 * MIN)
			});
			const [t] = await trx('tools')
				.insert({ machine_id: m.id, t_number: 2, h_number: 2, description: 'End mill' })
				.returning('id');
			mill = { id: Number(m.id), t2: Number(t.id) };
		},
		knex
	);
});
afterAll(() => knex.destroy());

describe('queued readings (real PostgreSQL)', () => {
	it('records a queued tool reading once, with the measured time and the received time', async () => {
		const q = toolQueued({ measuredAt: new Date(Date.now() - 20 * MIN).toISOString() });
		const before = await readingsCount();
		const first = await record(q);
		expect(first.outcome).toBe('saved');
		if (first.outcome !== 'saved') return;
		// reference-touch: H2 = machine Z − block = -14.7504 in (DESIGN.md §2 table, tip on the reference).
		expect(first.value).toBe(-14.7504);
		expect(first.label).toBe('H2');
		const again = await record(q);
		expect(again).toMatchObject({
			outcome: 'duplicate',
			readingId: first.readingId,
			value: -14.7504
		});
		expect(await readingsCount()).toBe(before + 1);
		const row = await withShop(
			shop,
			(trx) => trx('readings').where({ id: first.readingId }).first(),
			knex
		);
		expect(new Date(row.measured_at).toISOString()).toBe(q.measuredAt);
		expect(new Date(row.taken_at).getTime()).toBeGreaterThan(new Date(q.measuredAt).getTime());
		expect(row.client_key).toBe(q.clientKey);
	});

	it('the database itself refuses a second reading with the same key', async () => {
		const q = toolQueued({ machineZ: '-14.7505' });
		const saved = await record(q);
		expect(saved.outcome).toBe('saved');
		await expect(
			withShop(
				shop,
				async (trx) => {
					await trx('readings').insert({
						machine_id: mill.id,
						kind: 'tool-touch',
						tool_id: mill.t2,
						machine_z: -14.7505,
						reference_version: 1,
						client_key: q.clientKey
					});
				},
				knex
			)
		).rejects.toThrow(/readings_client_key_unique/);
	});

	it('refuses bad input and impossible times with the field and why, writing nothing', async () => {
		const before = await readingsCount();
		const issues = async (q: QueuedReading) => {
			try {
				await record(q);
			} catch (e) {
				expect(e).toBeInstanceOf(ReadingInputError);
				return (e as ReadingInputError).issues;
			}
			throw new Error('expected a refusal');
		};
		expect(await issues(toolQueued({ machineZ: '-25.0000' }))).toEqual([
			expect.objectContaining({ field: 'machineZ', message: expect.stringMatching(/travel/) })
		]);
		expect(
			await issues(toolQueued({ measuredAt: new Date(Date.now() + 60 * MIN).toISOString() }))
		).toEqual([
			expect.objectContaining({ field: 'measuredAt', message: expect.stringMatching(/clock/) })
		]);
		expect(
			await issues(toolQueued({ measuredAt: new Date(Date.now() - 8 * 86_400_000).toISOString() }))
		).toEqual([
			expect.objectContaining({ field: 'measuredAt', message: expect.stringMatching(/7 days/) })
		]);
		expect(await readingsCount()).toBe(before);
	});

	it('a value recorded after the queued one was measured: not saved, the operator decides', async () => {
		const old = toolQueued({
			machineZ: '-14.7506',
			measuredAt: new Date(Date.now() - 30 * MIN).toISOString()
		});
		const fresh = toolQueued({
			machineZ: '-14.7507',
			measuredAt: new Date().toISOString()
		});
		expect((await record(fresh)).outcome).toBe('saved');
		const before = await readingsCount();
		const answer = await record(old);
		expect(answer.outcome).toBe('needs-decision');
		if (answer.outcome !== 'needs-decision') return;
		expect(answer.reasons.map((r) => r.kind)).toContain('newer-value');
		expect(answer.formUrl).toMatch(/readings\/tool\/\d+\?machineZ=-14.7506/);
		expect(await readingsCount()).toBe(before);
	});

	it('the reference re-established after measuring: not saved, the reason says so', async () => {
		const q = toolQueued({
			machineZ: '-14.7508',
			measuredAt: new Date(Date.now() - 2 * MIN).toISOString()
		});
		await withShop(
			shop,
			async (trx) => {
				await trx('reference_surfaces').insert({
					machine_id: mill.id,
					version: 2,
					instrument: '1-2-3 block',
					height: 3,
					note: 'block re-seated'
				});
			},
			knex
		);
		const before = await readingsCount();
		const answer = await record(q);
		expect(answer.outcome).toBe('needs-decision');
		if (answer.outcome !== 'needs-decision') return;
		expect(answer.reasons[0]).toMatchObject({ kind: 'reference-changed' });
		expect(answer.reasons[0].message).toMatch(/re-established/);
		expect(await readingsCount()).toBe(before);
	});

	it('an engine Stop (decimal slip) is not recorded silently either', async () => {
		await withShop(
			shop,
			async (trx) => {
				await trx('reference_surfaces').insert({
					machine_id: mill.id,
					version: 3,
					instrument: '1-2-3 block',
					height: 3,
					established_at: new Date(Date.now() - 10 * MIN)
				});
			},
			knex
		);
		// -1.4751 in is a tenth of the last H2 (-14.7507 in): the point typed one place off.
		const q = toolQueued({ machineZ: '-1.4751' });
		const answer = await record(q);
		expect(answer.outcome).toBe('needs-decision');
		if (answer.outcome !== 'needs-decision') return;
		expect(answer.reasons.map((r) => r.kind)).toEqual(['decimal-slip']);
	});
});
