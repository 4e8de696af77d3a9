import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { partTopReadingSchema, toolReadingSchema } from '$lib/schemas/readings';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { correctingReading, lastPartTopToolId } from '$lib/server/readings/correcting';
import { ReadingInputError } from '$lib/server/readings/input';
import { previewPartTopReading } from '$lib/server/readings/preview';
import { recordPartTopReading, recordToolReading } from '$lib/server/readings/record';
import { provisionShop } from '$lib/server/shops/provision';
import { testDb, uniqueSuffix } from './db';

/**
 * What the reading pages load besides the form (the reading a correction replaces, the part
 * top's default tool) and the refusals both previews share, against the real PostgreSQL. Its
 * own shop, so the demo data is never touched. Lengths are invented example values.
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string };
let machineId: number;
let t2: number;
let t3: number;
let fixtureId: number;

const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const refusal = async (p: Promise<unknown>) => {
	try {
		await p;
	} catch (e) {
		expect(e).toBeInstanceOf(ReadingInputError);
		return (e as ReadingInputError).issues;
	}
	throw new Error('expected a refusal');
};

beforeAll(async () => {
	const email = `reading-pages-${uniqueSuffix()}@example.test`;
	const [u] = await knex('users').insert({ email, name: 'Pia Pages' }).returning('id');
	actor = { id: Number(u.id), email };
	shop = await provisionShop(knex, { name: 'Reading Pages', slug: `pages-${uniqueSuffix()}` });
	await withShop(
		shop,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: 'Page Mill', units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			machineId = Number(m.id);
			await trx('reference_surfaces').insert({
				machine_id: machineId,
				version: 1,
				instrument: '1-2-3 block',
				height: 3
			});
			const [a, b] = await trx('tools')
				.insert([
					{ machine_id: machineId, t_number: 2, h_number: 2, description: 'end mill' },
					{ machine_id: machineId, t_number: 3, h_number: 3, description: 'drill' }
				])
				.returning('id');
			t2 = Number(a.id);
			t3 = Number(b.id);
			const [f] = await trx('fixtures')
				.insert({ machine_id: machineId, register: 'G54', name: 'Vise' })
				.returning('id');
			fixtureId = Number(f.id);
		},
		knex
	);
});
afterAll(() => knex.destroy());

describe('reading pages (real PostgreSQL)', () => {
	it('loads the corrected reading only for its own tool or fixture', async () => {
		const tool = await inShop((trx, m) =>
			recordToolReading(trx, m, t2, toolReadingSchema.parse({ machineZ: '-14.7502' }), actor)
		);
		await inShop((trx, m) =>
			recordToolReading(trx, m, t3, toolReadingSchema.parse({ machineZ: '-12.5' }), actor)
		);
		expect(await inShop((trx) => lastPartTopToolId(trx, machineId, fixtureId))).toBeNull();
		const part = await inShop((trx, m) =>
			recordPartTopReading(
				trx,
				m,
				fixtureId,
				partTopReadingSchema.parse({
					machineZ: '-12.2501',
					withToolId: String(t3),
					touchedThrough: '1-2-3 block',
					blockHeight: '1'
				}),
				actor
			)
		);
		// W = reading − block − H: -12.2501 − 1 − (−12.5) (NISTIR 6556 composition, DESIGN.md §2)
		expect(part.preview.value).toBe(-0.7501);

		const ofTool = await inShop((trx) =>
			correctingReading(trx, machineId, { toolId: t2 }, String(tool.readingId))
		);
		expect(ofTool).toMatchObject({
			id: tool.readingId,
			machineZ: -14.7502,
			blockHeight: 0,
			by: 'Pia Pages',
			toolId: t2
		});
		// Another tool's reading, a part top asked for as a tool, junk: nothing to correct.
		for (const [of, raw] of [
			[{ toolId: t3 }, String(tool.readingId)],
			[{ toolId: t3 }, String(part.readingId)],
			[{ toolId: t2 }, '12abc'],
			[{ toolId: t2 }, null]
		] as const) {
			expect(await inShop((trx) => correctingReading(trx, machineId, of, raw))).toBeNull();
		}
		const ofFixture = await inShop((trx) =>
			correctingReading(trx, machineId, { fixtureId }, String(part.readingId))
		);
		expect(ofFixture).toMatchObject({ id: part.readingId, blockHeight: 1, toolId: t3 });
		expect(
			await inShop((trx) =>
				correctingReading(trx, machineId, { fixtureId }, String(tool.readingId))
			)
		).toBeNull();
		expect(await inShop((trx) => lastPartTopToolId(trx, machineId, fixtureId))).toBe(t3);
	});

	it('a part top refuses every issue at once: the touch, the tool, the change reason', async () => {
		const issues = await refusal(
			inShop((trx, m) =>
				previewPartTopReading(
					trx,
					m,
					fixtureId,
					partTopReadingSchema.parse({
						machineZ: '',
						touchedThrough: 'gauge block',
						fixtureChanged: true
					})
				)
			)
		);
		expect(issues).toEqual([
			{ field: 'machineZ', message: 'Machine Z is required.' },
			{
				field: 'blockHeight',
				message:
					'Give the height of the gauge block the tip touched (it is subtracted from the reading).'
			},
			{ field: 'withToolId', message: 'Choose the tool that touched the part top.' },
			{
				field: 'reason',
				message: 'Say what changed (e.g. new part in the vise, fixture re-seated).'
			}
		]);
	});

	it('a tool change needs its reason, in the words it always had', async () => {
		const issues = await refusal(
			inShop((trx, m) =>
				recordToolReading(
					trx,
					m,
					t2,
					toolReadingSchema.parse({ machineZ: '-14.8', toolChanged: true }),
					actor
				)
			)
		);
		expect(issues).toEqual([
			{
				field: 'reason',
				message: 'Say what changed (e.g. broken end mill replaced, new insert, new holder).'
			}
		]);
	});
});
