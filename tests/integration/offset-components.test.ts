import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
	edgeReadingSchema,
	partMeasurementSchema,
	toolRegisterSchema
} from '$lib/schemas/components';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { recordEdgeReading } from '$lib/server/components/edge';
import {
	componentHistory,
	currentComponents,
	setCutterRegister
} from '$lib/server/components/store';
import {
	acceptPartWear,
	previewPartWear,
	recordToolRegister,
	toolRegisters
} from '$lib/server/components/tool-registers';
import { programComponents } from '$lib/server/components/load-program';
import { buildLoadProgram } from '$lib/server/setups/load-program';
import { parseLoadProgramWithComponents } from '$lib/offsets';
import { engineMachine } from '$lib/server/offsets/machine-state';
import { provisionShop } from '$lib/server/shops/provision';
import { testDb, uniqueSuffix } from './db';

/**
 * The offset components beside Z (issue 20) against the real PostgreSQL: X/Y from edge
 * readings, wear registers behind the override gate, wear from a measured part, and Z left as
 * it was. Each run provisions its own shop.
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string };
let machineId: number;

const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const count = (table: string) =>
	withShop(shop, async (trx) => Number((await trx(table).count('* as n'))[0].n), knex);
const edge = (over: Record<string, unknown>) =>
	edgeReadingSchema.parse({ register: 'G54', axis: 'X', probeDiameter: '0.2000', ...over });

beforeAll(async () => {
	const email = `components-${uniqueSuffix()}@example.test`;
	const [u] = await knex('users').insert({ email, name: 'Cora Comp' }).returning('id');
	actor = { id: Number(u.id), email };
	shop = await provisionShop(knex, { name: 'Components Test', slug: `comp-${uniqueSuffix()}` });
	await withShop(
		shop,
		async (trx) => {
			const [m] = await trx('machines')
				.insert({ name: 'Test Mill', units: 'inch', z_travel: 20, resolution: 0.0001 })
				.returning('id');
			machineId = Number(m.id);
			await trx('tools').insert({
				machine_id: machineId,
				t_number: 3,
				h_number: 3,
				description: '3/8 in end mill'
			});
			await trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: '3',
				value: -13.2417,
				units: 'inch',
				convention: 'reference-touch',
				reference_version: 1
			});
		},
		knex
	);
});

afterAll(async () => {
	await knex.destroy();
});

describe('X/Y from edge readings', () => {
	it('records an edge: reading + radius from the minus side (common shop practice)', async () => {
		const saved = await inShop((trx, m) =>
			recordEdgeReading(trx, m, edge({ firstCoordinate: '-12.4000', firstSide: 'minus' }), actor)
		);
		expect(saved.preview.value).toBe(-12.3);
		const current = await inShop((trx) => currentComponents(trx, machineId));
		expect(current).toEqual([
			expect.objectContaining({ kind: 'work', register: 'G54', component: 'x', value: -12.3 })
		]);
	});

	it('records a centre of a bore from two walls (mean of the edges, common shop practice)', async () => {
		// Inside a bore: low wall touched from the plus side (edge = reading − r), high wall from
		// the minus side (edge = reading + r): walls at -8.1 and -6.1, centre -7.1.
		const saved = await inShop((trx, m) =>
			recordEdgeReading(
				trx,
				m,
				edge({
					axis: 'Y',
					datum: 'centre',
					feature: 'inside',
					firstCoordinate: '-8.0000',
					firstSide: 'plus',
					secondCoordinate: '-6.2000',
					secondSide: 'minus'
				}),
				actor
			)
		);
		expect(saved.preview.value).toBe(-7.1);
		expect(saved.preview.width).toBe(2);
	});

	it('refuses a missing probe diameter and writes nothing', async () => {
		const before = await count('edge_readings');
		await expect(
			inShop((trx, m) =>
				recordEdgeReading(
					trx,
					m,
					edge({ probeDiameter: '', firstCoordinate: '-12.4', firstSide: 'minus' }),
					actor
				)
			)
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'probeDiameter' })] });
		expect(await count('edge_readings')).toBe(before);
	});

	it('stops a touch from the other side that lands a probe diameter away, unless overridden', async () => {
		const before = await count('offset_component_versions');
		const wrong = { firstCoordinate: '-12.4000', firstSide: 'plus' };
		await expect(
			inShop((trx, m) => recordEdgeReading(trx, m, edge(wrong), actor))
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'overrideReason' })] });
		expect(await count('offset_component_versions')).toBe(before);
		const saved = await inShop((trx, m) =>
			recordEdgeReading(
				trx,
				m,
				edge({ ...wrong, override: true, overrideReason: 'Probe came from the right this time' }),
				actor
			)
		);
		expect(saved.preview.findings.map((f) => f.kind)).toEqual(['approach-side']);
		const history = await inShop((trx) => componentHistory(trx, machineId, 'work', 'G54', 'x'));
		expect(history.map((h) => h.value)).toEqual([-12.5, -12.3]);
		expect(history[0].overrideReason).toBe('Probe came from the right this time');
	});

	it('keeps the rows append-only', async () => {
		await expect(
			withShop(shop, (trx) => trx('edge_readings').update({ position: 0 }), knex)
		).rejects.toThrow(/append-only/);
		await expect(
			withShop(shop, (trx) => trx('offset_component_versions').delete(), knex)
		).rejects.toThrow(/append-only/);
	});
});

describe('wear registers', () => {
	it('refuses wear beyond the limit without an override and saves it with one', async () => {
		const form = (over: Record<string, unknown>) =>
			toolRegisterSchema.parse({ h: '3', component: 'length-wear', value: '-0.0120', ...over });
		const before = await count('offset_component_versions');
		await expect(
			inShop((trx, m) => recordToolRegister(trx, m, form({}), actor))
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'overrideReason' })] });
		await expect(
			inShop((trx, m) => recordToolRegister(trx, m, form({ override: true }), actor))
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'overrideReason' })] });
		expect(await count('offset_component_versions')).toBe(before);
		await inShop((trx, m) => recordToolRegister(trx, m, form({ value: '-0.0010' }), actor));
		const regs = await inShop((trx, m) => toolRegisters(trx, m));
		const t3 = regs.tools.find((t) => t.h === '3')!;
		// Effective = geometry + wear (ISO-style mill manual §1.2.10, SOURCES.md 3).
		expect(t3.lengthGeometry).toBe(-13.2417);
		expect(t3.lengthWear).toBe(-0.001);
		expect(t3.lengthEffective).toBe(-13.2427);
	});

	it('turns a shallow pocket into negative length wear and records it when accepted', async () => {
		const form = partMeasurementSchema.parse({
			h: '3',
			feature: 'depth',
			nominal: '0.5000',
			measured: '0.4980'
		});
		const p = await inShop((trx, m) => previewPartWear(trx, m, form));
		// G43 adds the length offset (NIST RS274NGC v3 §3.5.11): shallow floor → lower tip → −.
		expect(p.change).toBe(-0.002);
		expect(p.newWear).toBe(-0.003);
		expect(p.explanation).toContain('0.0020 in shallow');
		const saved = await inShop((trx, m) =>
			acceptPartWear(trx, m, { ...form, accept: true }, actor)
		);
		expect(saved.proposal.newWear).toBe(-0.003);
		const regs = await inShop((trx, m) => toolRegisters(trx, m));
		expect(regs.tools.find((t) => t.h === '3')!.lengthWear).toBe(-0.003);
		const z = await withShop(
			shop,
			(trx) => trx('current_offsets').where({ machine_id: machineId }).select('register', 'value'),
			knex
		);
		// Z is untouched: the length geometry is still the one Z version.
		expect(z.map((r) => [r.register, Number(r.value)])).toEqual([['3', -13.2417]]);
	});
});

describe('load program with components', () => {
	it('writes X/Y beside Z, names the wear (tool-table style) and withholds an overridden X', async () => {
		const text = await inShop(async (trx, m) => {
			const comps = await programComponents(trx, m);
			// G54 X was saved over a Stop (approach side) above: withheld like an overridden Z.
			expect(comps.flagged).toEqual([
				expect.objectContaining({ section: 'work', register: 'G54', component: 'x' })
			]);
			const table = {
				convention: 'reference-touch' as const,
				units: 'inch' as const,
				work: { G54: 1.25 },
				tools: { '3': -13.2417 }
			};
			const r = buildLoadProgram(m, table, { title: 'T', filename: 't', components: comps });
			if (!r.ok) throw new Error(r.reasons.join('; '));
			return { text: r.text, machine: engineMachine(m) };
		});
		expect(text.text).toContain('G10 L2 P1 Y-7.1000 Z1.2500');
		expect(text.text).toContain('(WITHHELD G54 X SAVED OVER A STOP)');
		expect(text.text).toContain('(H3 LENGTH WEAR -0.0030)');
		const back = parseLoadProgramWithComponents(text.text, text.machine);
		expect(back.components.work).toEqual({ G54: { y: -7.1 } });
	});
});

describe('cutter register setting', () => {
	it('a diameter machine takes the whole size error; the setting is refused once radius values exist', async () => {
		await inShop((trx, m) => setCutterRegister(trx, m, 'diameter', actor));
		const form = partMeasurementSchema.parse({
			h: '3',
			feature: 'outside',
			nominal: '1.0000',
			measured: '1.0020'
		});
		// Outside too big: cut more → negative; diameter register takes the whole 0.002
		// (common shop practice; wear.ts).
		const p = await inShop((trx, m) => previewPartWear(trx, m, form));
		expect(p.component).toBe('radius-wear');
		expect(p.change).toBe(-0.002);
		await inShop((trx, m) =>
			recordToolRegister(
				trx,
				m,
				toolRegisterSchema.parse({ h: '3', component: 'radius', value: '0.3750' }),
				actor
			)
		);
		await expect(
			inShop((trx, m) => setCutterRegister(trx, m, 'radius', actor))
		).rejects.toMatchObject({ issues: [expect.objectContaining({ field: 'cutterRegister' })] });
	});
});
