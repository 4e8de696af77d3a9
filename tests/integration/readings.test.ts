import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toolReadingSchema, partTopReadingSchema } from '$lib/schemas/readings';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, machineState, type MachineRecord } from '$lib/server/offsets/machine-state';
import { ReadingInputError } from '$lib/server/readings/input';
import { correctingReading, lastPartTopToolId } from '$lib/server/readings/correcting';
import { previewPartTopReading, previewToolReading } from '$lib/server/readings/preview';
import { recordPartTopReading, recordToolReading } from '$lib/server/readings/record';
import { recordReference } from '$lib/server/readings/reference';
import { registerHistory } from '$lib/server/readings/history';
import { testDb } from './db';
import { newTestMill } from './test-mill';

/**
 * Reading flows against the real PostgreSQL: a reading and its offset version are written
 * together or not at all, re-establishing a reference makes older offsets stale, and the
 * correction rules. Each run provisions its own shop so the demo data is never touched.
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string };
let machineId: number;
let toolId: number;
let tool2Id: number;
let fixtureId: number;
const DAY = 86_400_000;

const tool = (over: Partial<ReturnType<typeof toolReadingSchema.parse>> = {}) =>
	toolReadingSchema.parse({ machineZ: '-14.7002', ...over });
const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const count = (table: string) =>
	withShop(shop, async (trx) => Number((await trx(table).count('* as n'))[0].n), knex);

beforeAll(async () => {
	({ shop, actor, machineId } = await newTestMill(knex, {
		slug: 'readings',
		person: 'Rita Reader',
		shopName: 'Readings Test',
		machineName: 'Test Mill',
		referenceDaysAgo: 30
	}));
	await withShop(
		shop,
		async (trx) => {
			const [t1, t2] = await trx('tools')
				.insert([
					{ machine_id: machineId, t_number: 2, h_number: 2, description: '1/2 in end mill' },
					{ machine_id: machineId, t_number: 3, h_number: 3, description: 'drill' }
				])
				.returning('id');
			toolId = Number(t1.id);
			tool2Id = Number(t2.id);
			const [f] = await trx('fixtures')
				.insert({ machine_id: machineId, register: 'G54', name: 'Vise' })
				.returning('id');
			fixtureId = Number(f.id);
			// T2 measured 10 days ago at -14.7502 in.
			const [r] = await trx('readings')
				.insert({
					machine_id: machineId,
					kind: 'tool-touch',
					tool_id: toolId,
					machine_z: -14.7502,
					reference_version: 1,
					taken_by: actor.id,
					taken_at: new Date(Date.now() - 10 * DAY)
				})
				.returning('id');
			await trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: '2',
				value: -14.7502,
				units: 'inch',
				convention: 'reference-touch',
				reading_id: r.id,
				reference_version: 1,
				created_by: actor.id,
				created_at: new Date(Date.now() - 10 * DAY)
			});
		},
		knex
	);
});
afterAll(() => knex.destroy());

describe('reading flows (real PostgreSQL)', () => {
	it('previews the offset and the jump finding without writing anything', async () => {
		const before = await count('readings');
		const jump = await inShop((trx, m) => previewToolReading(trx, m, toolId, tool()));
		expect(jump.preview.value).toBe(-14.7002);
		expect(jump.preview.previous).toBe(-14.7502);
		expect(jump.preview.delta).toBe(0.05);
		expect(jump.preview.findings.map((f) => f.kind)).toContain('jump');
		// Marked as a tool change, the same number is expected: no jump.
		const changed = await inShop((trx, m) =>
			previewToolReading(trx, m, toolId, tool({ toolChanged: true, reason: 'chipped' }))
		);
		expect(changed.preview.findings.map((f) => f.kind)).not.toContain('jump');
		expect(await count('readings')).toBe(before);
	});

	it('refuses bad input with the field and why, and writes nothing', async () => {
		const before = await count('readings');
		const refused = async (form: ReturnType<typeof tool>) => {
			try {
				await inShop((trx, m) => recordToolReading(trx, m, toolId, form, actor));
			} catch (e) {
				expect(e).toBeInstanceOf(ReadingInputError);
				return (e as ReadingInputError).issues;
			}
			throw new Error('expected a refusal');
		};
		expect(await refused(tool({ machineZ: 'abc' }))).toEqual([
			expect.objectContaining({ field: 'machineZ', message: expect.stringMatching(/number/) })
		]);
		expect(await refused(tool({ machineZ: '-25.0000' }))).toEqual([
			expect.objectContaining({ field: 'machineZ', message: expect.stringMatching(/travel/) })
		]);
		expect(await refused(tool({ machineZ: '-14.70021' }))).toEqual([
			expect.objectContaining({ field: 'machineZ', message: expect.stringMatching(/decimals/) })
		]);
		expect(await refused(tool({ blockHeight: '0.1' }))).toEqual([
			expect.objectContaining({ field: 'blockHeight' })
		]);
		expect(await refused(tool({ touchedThrough: 'gauge block', blockHeight: '' }))).toEqual([
			expect.objectContaining({ field: 'blockHeight' })
		]);
		expect(await refused(tool({ toolChanged: true }))).toEqual([
			expect.objectContaining({ field: 'reason' })
		]);
		await expect(
			inShop((trx, m) => recordToolReading(trx, m, 999_999, tool(), actor))
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'tool' })] });
		const noTool = partTopReadingSchema.parse({
			machineZ: '-13.0296',
			withToolId: String(tool2Id)
		});
		await expect(
			inShop((trx, m) => recordPartTopReading(trx, m, fixtureId, noTool, actor))
		).rejects.toMatchObject({
			issues: [
				expect.objectContaining({ field: 'withToolId', message: expect.stringMatching(/T3/) })
			]
		});
		expect(await count('readings')).toBe(before);
	});

	it('writes the reading, its offset version and the audit entry together', async () => {
		const saved = await inShop((trx, m) =>
			recordToolReading(
				trx,
				m,
				toolId,
				tool({ toolChanged: true, reason: 'End mill broke; new one' }),
				actor
			)
		);
		const { reading, version, audit } = await inShop(async (trx) => ({
			reading: await trx('readings').where({ id: saved.readingId }).first(),
			version: await trx('offset_versions').where({ id: saved.offsetVersionId }).first(),
			audit: await trx('audit_log')
				.where({ action: 'reading.recorded' })
				.orderBy('id', 'desc')
				.first()
		}));
		expect(reading).toMatchObject({
			kind: 'tool-remeasure',
			tool_changed: true,
			reference_version: 1
		});
		expect(Number(reading.machine_z)).toBe(-14.7002);
		expect(version).toMatchObject({ register_kind: 'tool', register: '2', units: 'inch' });
		expect(Number(version.value)).toBe(-14.7002);
		expect(Number(version.reading_id)).toBe(saved.readingId);
		expect(audit.detail).toMatchObject({ readingId: saved.readingId, register: 'H2' });
	});

	it('writes neither row when the offset version cannot be written', async () => {
		const readings = await count('readings');
		const versions = await count('offset_versions');
		await withShop(
			shop,
			async (trx) => {
				await trx.raw(`create or replace function dk_test_refuse() returns trigger language plpgsql as $$
					begin raise exception 'offset version refused for the test'; end $$`);
				await trx.raw(
					'create trigger dk_test_refuse before insert on offset_versions for each row execute function dk_test_refuse()'
				);
			},
			knex
		);
		try {
			await expect(
				inShop((trx, m) => recordToolReading(trx, m, toolId, tool({ machineZ: '-14.7004' }), actor))
			).rejects.toThrow(/offset version refused/);
		} finally {
			await withShop(
				shop,
				async (trx) => {
					await trx.raw('drop trigger dk_test_refuse on offset_versions');
					await trx.raw('drop function dk_test_refuse()');
				},
				knex
			);
		}
		expect(await count('readings')).toBe(readings);
		expect(await count('offset_versions')).toBe(versions);
		expect(
			await inShop(async (trx) => trx('readings').where({ machine_z: -14.7004 }).first())
		).toBeUndefined();
	});

	it('readings and offset versions refuse UPDATE and DELETE at the database', async () => {
		await expect(inShop((trx) => trx('readings').update({ reason: 'edited' }))).rejects.toThrow(
			/append-only/
		);
		await expect(inShop((trx) => trx('offset_versions').del())).rejects.toThrow(/append-only/);
	});

	it('corrections: same tool, a reason, once; the wrong value stops being the baseline', async () => {
		// -14.0702 for -14.7002: the engine sees two neighbouring digits swapped, a Stop, so the
		// server refuses it without an override and a reason, and writes nothing.
		const before = await inShop(async (trx) => trx('readings').count('* as n').first());
		await expect(
			inShop((trx, m) => recordToolReading(trx, m, toolId, tool({ machineZ: '-14.0702' }), actor))
		).rejects.toMatchObject({
			issues: [
				expect.objectContaining({
					field: 'overrideReason',
					message: expect.stringMatching(/is Stop \(Two digits probably swapped\)/)
				})
			]
		});
		await expect(
			inShop((trx, m) =>
				recordToolReading(
					trx,
					m,
					toolId,
					tool({ machineZ: '-14.0702', override: true, overrideReason: '  ' }),
					actor
				)
			)
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'overrideReason' })] });
		expect(await inShop(async (trx) => trx('readings').count('* as n').first())).toEqual(before);
		const wrong = await inShop((trx, m) =>
			recordToolReading(
				trx,
				m,
				toolId,
				tool({ machineZ: '-14.0702', override: true, overrideReason: 'Control shows this' }),
				actor
			)
		);
		expect(wrong.preview.findings.map((f) => f.kind)).toContain('transposed-digits');
		const saved = await inShop(async (trx) =>
			trx('readings').where({ id: wrong.readingId }).first('override_reason', 'overridden_findings')
		);
		expect(saved).toEqual({
			override_reason: 'Control shows this',
			overridden_findings: ['transposed-digits']
		});
		const overrideAudit = await inShop(async (trx) =>
			trx('audit_log').where({ action: 'reading.override' }).orderBy('id', 'desc').first('detail')
		);
		expect(overrideAudit.detail).toMatchObject({
			readingId: wrong.readingId,
			reason: 'Control shows this'
		});
		const correction = (over: Partial<ReturnType<typeof tool>>, onTool = toolId) =>
			inShop((trx, m) =>
				recordToolReading(
					trx,
					m,
					onTool,
					tool({ correctsReadingId: String(wrong.readingId), ...over }),
					actor
				)
			);
		await expect(correction({ reason: '' })).rejects.toMatchObject({
			issues: [expect.objectContaining({ field: 'reason' })]
		});
		await expect(correction({ reason: 'typo' }, tool2Id)).rejects.toMatchObject({
			issues: [
				expect.objectContaining({
					field: 'correctsReadingId',
					message: expect.stringMatching(/same tool/)
				})
			]
		});
		const fixed = await correction({ reason: 'Digits swapped when typing' });
		// Compared with the value before the wrong one, not with the wrong one: no finding.
		expect(fixed.preview.findings).toEqual([]);
		await expect(correction({ reason: 'again' })).rejects.toMatchObject({
			issues: [
				expect.objectContaining({
					field: 'correctsReadingId',
					message: expect.stringMatching(/already corrected/)
				})
			]
		});
		// An older reading is history: only the one behind the current value can be corrected.
		const oldest = await inShop(async (trx) =>
			trx('readings').where({ tool_id: toolId }).orderBy('id').first('id')
		);
		await expect(
			inShop((trx, m) =>
				recordToolReading(
					trx,
					m,
					toolId,
					tool({ correctsReadingId: String(oldest.id), reason: 'old typo' }),
					actor
				)
			)
		).rejects.toMatchObject({
			issues: [expect.objectContaining({ message: expect.stringMatching(/not the newest/) })]
		});
		const rows = await inShop((trx, m) => registerHistory(trx, m, 'tool', '2'));
		const old = rows.find((r) => r.readingId === wrong.readingId)!;
		expect(old.correctedByReadingId).toBe(fixed.readingId);
		expect(rows.at(-1)).toMatchObject({ correctsReadingId: wrong.readingId, value: -14.7002 });
		// The database refuses a correction without a reason even if the app did not.
		await expect(
			inShop((trx) =>
				trx('readings').insert({
					machine_id: machineId,
					kind: 'tool-touch',
					tool_id: toolId,
					machine_z: -14.7,
					reference_version: 1,
					corrects_reading_id: wrong.readingId
				})
			)
		).rejects.toThrow(/readings_correction_reason/);
	});

	it('re-establishing the reference makes every older offset stale-reference', async () => {
		const staleKinds = async () =>
			inShop(async (trx, m) =>
				(await machineState(trx, m)).findings
					.filter((f) => f.kind === 'stale-reference')
					.map((f) => (f.subject.type === 'tool' ? `H${f.subject.h}` : f.subject.type))
			);
		expect(await staleKinds()).toEqual([]);
		const ref = await inShop((trx, m) =>
			recordReference(
				trx,
				m,
				{
					instrument: '1-2-3 block',
					height: '3',
					location: 'front left',
					gaugeLineZ: '',
					note: 'Block knocked and re-seated',
					checkToolId: String(toolId),
					machineZ: '-14.7012',
					blockHeight: ''
				},
				actor
			)
		);
		expect(ref.version).toBe(2);
		expect(ref.preview.becomeStale.map((s) => s.label)).toEqual(['H2']);
		expect(ref.preview.shift?.delta).toBe(-0.001);
		expect(await staleKinds()).toEqual(['H2']);
		// Re-measured against the new reference, it is current again.
		await new Promise((r) => setTimeout(r, 20));
		const again = await inShop((trx, m) =>
			recordToolReading(trx, m, toolId, tool({ machineZ: '-14.7012' }), actor)
		);
		expect(again.preview.referenceVersion).toBe(2);
		expect(await staleKinds()).toEqual([]);
	});
});

const refusal = async (p: Promise<unknown>) => {
	try {
		await p;
	} catch (e) {
		expect(e).toBeInstanceOf(ReadingInputError);
		return (e as ReadingInputError).issues;
	}
	throw new Error('expected a refusal');
};

// What the reading pages load besides the form, and the refusals both previews share.
describe('reading pages (real PostgreSQL)', () => {
	it('loads the corrected reading only for its own tool or fixture', async () => {
		const tool = await inShop((trx, m) =>
			recordToolReading(trx, m, toolId, toolReadingSchema.parse({ machineZ: '-14.7012' }), actor)
		);
		await inShop((trx, m) =>
			recordToolReading(trx, m, tool2Id, toolReadingSchema.parse({ machineZ: '-12.5' }), actor)
		);
		expect(await inShop((trx) => lastPartTopToolId(trx, machineId, fixtureId))).toBeNull();
		const part = await inShop((trx, m) =>
			recordPartTopReading(
				trx,
				m,
				fixtureId,
				partTopReadingSchema.parse({
					machineZ: '-12.2501',
					withToolId: String(tool2Id),
					touchedThrough: '1-2-3 block',
					blockHeight: '1'
				}),
				actor
			)
		);
		// W = reading − block − H: -12.2501 − 1 − (−12.5) (NISTIR 6556 composition, DESIGN.md §2)
		expect(part.preview.value).toBe(-0.7501);

		const ofTool = await inShop((trx) =>
			correctingReading(trx, machineId, { toolId }, String(tool.readingId))
		);
		expect(ofTool).toMatchObject({
			id: tool.readingId,
			machineZ: -14.7012,
			blockHeight: 0,
			by: 'Rita Reader',
			toolId
		});
		// Another tool's reading, a part top asked for as a tool, junk: nothing to correct.
		for (const [of, raw] of [
			[{ toolId: tool2Id }, String(tool.readingId)],
			[{ toolId: tool2Id }, String(part.readingId)],
			[{ toolId }, '12abc'],
			[{ toolId }, null]
		] as const) {
			expect(await inShop((trx) => correctingReading(trx, machineId, of, raw))).toBeNull();
		}
		const ofFixture = await inShop((trx) =>
			correctingReading(trx, machineId, { fixtureId }, String(part.readingId))
		);
		expect(ofFixture).toMatchObject({ id: part.readingId, blockHeight: 1, toolId: tool2Id });
		expect(
			await inShop((trx) =>
				correctingReading(trx, machineId, { fixtureId }, String(tool.readingId))
			)
		).toBeNull();
		expect(await inShop((trx) => lastPartTopToolId(trx, machineId, fixtureId))).toBe(tool2Id);
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
					toolId,
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
