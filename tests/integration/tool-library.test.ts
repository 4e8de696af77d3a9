import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toolOffsetFromPresetter, toolOffsetFromTouch } from '$lib/offsets';
import {
	assemblyFormSchema,
	assignFormSchema,
	presetterMappingSchema,
	type PresetterMapping
} from '$lib/schemas/tool-library';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { ReadingInputError } from '$lib/server/readings/input';
import { provisionShop } from '$lib/server/shops/provision';
import { assignAssembly, previewAssignment } from '$lib/server/tool-library/assign';
import { addAssembly, getAssembly, listAssemblies } from '$lib/server/tool-library/library';
import { importPresetterCsv, saveMapping } from '$lib/server/tool-library/presetter-import';
import { libraryToolsOf } from '$lib/server/tool-library/placement';
import { componentRecord } from '$lib/server/components/history';
import { testDb, uniqueSuffix } from './db';

/**
 * Tools measured off the machine (issue 20) against the real PostgreSQL: the presetter CSV import
 * is all-or-nothing with row errors, honours the mapping's units and decimal separator, and an
 * assembly put in a pocket gets the H the engine gives for that machine's convention, recorded
 * as a 'presetter' reading with its offset version.
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string };
const ids: Record<string, number> = {};
const R_MILL = -19.8612;
const R_MASTER = -18.5;
const MASTER_TOUCH_Z = -14.25;

const inShop = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shop, fn, knex);
const machine = (trx: Knex.Transaction, name: string) =>
	getMachine(trx, ids[name]) as Promise<MachineRecord>;
const count = (table: string) =>
	inShop(async (trx) => Number((await trx(table).count('* as n'))[0].n));
const mapping = (over: Partial<Record<keyof PresetterMapping, string>>): PresetterMapping =>
	presetterMappingSchema.parse({
		name: 'Tool ID',
		gaugeLength: 'Length Z',
		radius: '',
		diameter: 'Dia',
		holder: '',
		cutter: 'Cutter',
		stickOut: '',
		measuredAt: 'Date',
		presetter: '',
		units: 'mm',
		decimalSeparator: 'comma',
		delimiter: 'semicolon',
		...over
	});
const importCsv = (csv: string, preview = false) =>
	inShop((trx) =>
		importPresetterCsv(
			trx,
			csv,
			{ fileName: 'export.csv', preview, timeZone: 'America/Chicago' },
			actor
		)
	);

beforeAll(async () => {
	const email = `library-${uniqueSuffix()}@example.test`;
	const [u] = await knex('users').insert({ email, name: 'Lena Library' }).returning('id');
	actor = { id: Number(u.id), email };
	shop = await provisionShop(knex, {
		name: 'Library Test',
		slug: `library-${uniqueSuffix()}`,
		timeZone: 'America/Chicago'
	});
	await withShop(
		shop,
		async (trx) => {
			const add = async (name: string, m: Record<string, unknown>, gaugeLineZ: number | null) => {
				const [row] = await trx('machines')
					.insert({ name, resolution: 0.0001, units: 'inch', z_travel: 20, ...m })
					.returning('id');
				ids[name] = Number(row.id);
				await trx('reference_surfaces').insert({
					machine_id: row.id,
					version: 1,
					instrument: '1-2-3 block',
					height: 3,
					gauge_line_z: gaugeLineZ
				});
			};
			await add('Touch Mill', { convention: 'reference-touch' }, R_MILL);
			await add('No R Mill', { convention: 'reference-touch' }, null);
			// An R typed wrong (-3 in on a 20 in mill): every H from it comes out positive.
			await add('Bad R Mill', { convention: 'reference-touch' }, -3);
			await add(
				'Metric Mill',
				{ convention: 'gauge-length', units: 'mm', z_travel: 510, resolution: 0.001 },
				-402.315
			);
			await add('Master Mill', { convention: 'master-tool', master_tool_h: 1 }, R_MASTER);
			const [t] = await trx('tools')
				.insert({ machine_id: ids['Master Mill'], t_number: 1, h_number: 1, description: 'master' })
				.returning('id');
			await trx('readings').insert({
				machine_id: ids['Master Mill'],
				kind: 'tool-touch',
				tool_id: t.id,
				machine_z: MASTER_TOUCH_Z,
				reference_version: 1,
				taken_by: actor.id
			});
		},
		knex
	);
});

afterAll(async () => {
	await knex.destroy();
});

describe('presetter CSV import', () => {
	it('refuses to import before the shop has mapped its columns', async () => {
		const r = await importCsv('Tool ID;Length Z\nA-1;100,5\n');
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.message).toMatch(/Map the presetter’s columns first/);
	});

	it('a file with one bad row imports nothing and names row, column, value and why', async () => {
		await inShop((trx) => saveMapping(trx, mapping({}), actor));
		const before = {
			a: await count('tool_assemblies'),
			m: await count('assembly_measurements'),
			i: await count('presetter_imports')
		};
		const csv = [
			'Tool ID;Length Z;Dia;Cutter;Date',
			'A-1;104,775;12,7;12.7 mm end mill;2026-11-30 08:15',
			'A-2;98.250;10;drill;2026-11-30 08:20',
			'A-3;0;6;chamfer;2026-11-30',
			'A-1;110;6;again;2026-02-30'
		].join('\n');
		const preview = await importCsv(csv, true);
		expect(preview.ok && preview.preview).toBe(true);
		if (!preview.ok || !preview.preview) return;
		const [r2, r3, r4, r5] = preview.rows;
		expect(r2.errors).toEqual([]);
		// The mapping says decimal comma: "104,775" is 104.775 (in the mapping's units, mm).
		expect(r2.measurement).toMatchObject({ gaugeLength: 104.775, radius: 6.35, name: 'A-1' });
		expect(r3.errors).toEqual([
			expect.objectContaining({
				column: 'Length Z',
				value: '98.250',
				message: expect.stringMatching(/has a point.*decimal comma/)
			})
		]);
		expect(r4.errors[0]).toMatchObject({ column: 'Length Z', value: '0' });
		expect(r4.errors[0].message).toMatch(/greater than zero/);
		expect(r5.errors.map((e) => e.column).sort()).toEqual(['Date', 'Tool ID']);
		expect(r5.errors.find((e) => e.column === 'Tool ID')!.message).toMatch(/also on row 2/);

		const r = await importCsv(csv);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.message).toMatch(/3 of 4 row\(s\) have errors, so nothing was imported/);
		expect(await count('tool_assemblies')).toBe(before.a);
		expect(await count('assembly_measurements')).toBe(before.m);
		expect(await count('presetter_imports')).toBe(before.i);
	});

	it('imports every row when all are good, in the mapped units, with the shop’s time zone', async () => {
		const csv = [
			'Tool ID;Length Z;Dia;Cutter;Date',
			'A-1;104,775;12,7;12.7 mm end mill;2026-11-30 08:15',
			'A-2;98,25;10;8.5 mm drill;2026-11-30 08:20'
		].join('\n');
		const r = await importCsv(csv);
		expect(r).toMatchObject({ ok: true, preview: false, imported: 2, created: 2 });
		const lib = await inShop((trx) => listAssemblies(trx));
		const a1 = lib.find((a) => a.name === 'A-1')!;
		expect(a1.latest).toMatchObject({
			gaugeLength: 104.775,
			radius: 6.35,
			units: 'mm',
			source: 'csv'
		});
		// 08:15 in Chicago (UTC−6 in November) is 14:15 UTC.
		expect(a1.latest!.measuredAt).toBe('2026-11-30T14:15:00.000Z');
		ids['A-1'] = a1.id;
	});

	it('a re-measure in a later file is a new measurement; the earlier one stays', async () => {
		await inShop((trx) =>
			saveMapping(
				trx,
				mapping({ units: 'inch', decimalSeparator: 'point', delimiter: 'comma', diameter: '' }),
				actor
			)
		);
		// With the point mapping, a decimal comma is refused (and the hint says where to change it).
		const bad = await importCsv(
			'Tool ID,Length Z,Cutter,Date\nA-2,"3,8681",drill,2026-12-01\n',
			true
		);
		expect(bad.ok && bad.preview && bad.rows[0].errors[0].message).toMatch(
			/has a comma.*set the mapping’s decimal separator to comma/
		);
		const r = await importCsv('Tool ID,Length Z,Cutter,Date\nA-2,3.8681,drill,2026-12-01 07:00\n');
		expect(r).toMatchObject({ ok: true, imported: 1, created: 0 });
		const a2 = await inShop(async (trx) => {
			const id = (await listAssemblies(trx)).find((a) => a.name === 'A-2')!.id;
			return getAssembly(trx, id);
		});
		expect(a2!.measurements.map((m) => [m.gaugeLength, m.units])).toEqual([
			[3.8681, 'inch'],
			[98.25, 'mm']
		]);
	});

	it('measurements are append-only in the database', async () => {
		await expect(
			inShop((trx) => trx('assembly_measurements').update({ gauge_length: 1 }))
		).rejects.toThrow(/append-only/);
		await expect(inShop((trx) => trx('assembly_measurements').del())).rejects.toThrow(
			/append-only/
		);
	});
});

describe('assigning an assembly to a pocket', () => {
	// A-1 measured 104.775 mm = 4.125 in exactly (1 in = 25.4 mm, NIST SP 811).
	const L_IN = 4.125;

	it('reference-touch: H = R + L, the same H a touch-off on the reference would give', async () => {
		const form = assignFormSchema.parse({ machineId: ids['Touch Mill'], t: '6', h: '' });
		const r = await inShop(async (trx) =>
			assignAssembly(trx, ids['A-1'], await machine(trx, 'Touch Mill'), form, actor)
		);
		// DESIGN.md §2: reference-touch H = R + L; NIST RS274NGC v3 G43 adds H to the gauge line.
		const engine = toolOffsetFromPresetter({
			convention: 'reference-touch',
			units: 'inch',
			gaugeLength: L_IN,
			referenceGaugeLineZ: R_MILL
		});
		const touch = toolOffsetFromTouch({
			convention: 'reference-touch',
			units: 'inch',
			touchZ: R_MILL + L_IN
		});
		expect(r.preview.value).toBe(engine);
		expect(r.preview.value).toBe(touch);
		expect(r.preview.value).toBe(-15.7362);
		const row = await inShop((trx) =>
			trx('readings as r')
				.join('offset_versions as o', 'o.reading_id', 'r.id')
				.join('tools as t', 't.id', 'r.tool_id')
				.where('r.id', r.readingId)
				.first(
					'r.kind',
					'r.machine_z',
					'r.presetter_measurement_id',
					'o.value',
					't.t_number',
					't.h_number'
				)
		);
		expect(row).toMatchObject({ kind: 'presetter', machine_z: null, t_number: 6, h_number: 6 });
		expect(Number(row.value)).toBe(-15.7362);
		const current = await inShop((trx) =>
			trx('current_offsets')
				.where({ machine_id: ids['Touch Mill'], register_kind: 'tool', register: '6' })
				.first('value')
		);
		expect(Number(current.value)).toBe(-15.7362);
	});

	it('the same assembly moved to a metric gauge-length mill keeps its measured length (H = L)', async () => {
		const before = await count('assembly_measurements');
		const form = assignFormSchema.parse({ machineId: ids['Metric Mill'], t: '12', h: '' });
		const r = await inShop(async (trx) =>
			assignAssembly(trx, ids['A-1'], await machine(trx, 'Metric Mill'), form, actor)
		);
		// DESIGN.md §2: gauge-length H = L.
		expect(r.preview.value).toBe(
			toolOffsetFromPresetter({ convention: 'gauge-length', units: 'mm', gaugeLength: 104.775 })
		);
		expect(r.preview.value).toBe(104.775);
		const a = await inShop((trx) => getAssembly(trx, ids['A-1']));
		expect(new Set(a!.assignments.map((s) => s.measurementId)).size).toBe(1);
		expect(a!.assignments.map((s) => s.machineName).sort()).toEqual(['Metric Mill', 'Touch Mill']);
		expect(await count('assembly_measurements')).toBe(before);
		// One assembly, one place: the move ended the Touch Mill assignment (the tool stays there).
		const listed = (await inShop((trx) => listAssemblies(trx))).find((x) => x.id === ids['A-1']);
		expect(listed!.places).toEqual(['Metric Mill T12']);
		expect(a!.places).toEqual(['Metric Mill T12']);
		const [now, was] = a!.assignments;
		expect(now).toMatchObject({ machineName: 'Metric Mill', endedAt: null, endReason: null });
		expect(was).toMatchObject({ machineName: 'Touch Mill', endReason: 'moved' });
		expect(was.endedAt).not.toBeNull();
		expect(r.ended).toBe(1);
		const touchTools = await inShop(async (trx) =>
			libraryToolsOf(trx, ids['Touch Mill']).then((m) => [...m.values()])
		);
		expect(touchTools).toEqual([]);
		const metricTools = await inShop(async (trx) =>
			libraryToolsOf(trx, ids['Metric Mill']).then((m) => [...m.entries()])
		);
		expect(metricTools).toEqual([[r.toolId, expect.objectContaining({ assemblyId: ids['A-1'] })]]);
		// The end is append-only like the assignment itself.
		await expect(
			inShop((trx) => trx('assembly_assignment_ends').update({ reason: 'replaced' }))
		).rejects.toThrow();
	});

	it('master-tool: H = L − L_m, with the master touched on the reference (L_m = touch − R)', async () => {
		const form = assignFormSchema.parse({ machineId: ids['Master Mill'], t: '4', h: '' });
		const r = await inShop(async (trx) =>
			assignAssembly(trx, ids['A-1'], await machine(trx, 'Master Mill'), form, actor)
		);
		// DESIGN.md §2: master-tool H_i = L_i − L_m; the master's L_m = its touch Z − R.
		const masterL = MASTER_TOUCH_Z - R_MASTER;
		expect(r.preview.value).toBe(
			toolOffsetFromPresetter({
				convention: 'master-tool',
				units: 'inch',
				gaugeLength: L_IN,
				masterGaugeLength: masterL
			})
		);
		expect(r.preview.value).toBe(-0.125);
	});

	it('a machine without R is refused with the reason, and nothing is written', async () => {
		const before = { r: await count('readings'), t: await count('tools') };
		const form = assignFormSchema.parse({ machineId: ids['No R Mill'], t: '3', h: '' });
		const err = await inShop(async (trx) =>
			previewAssignment(trx, ids['A-1'], await machine(trx, 'No R Mill'), form).catch((e) => e)
		);
		expect(err).toBeInstanceOf(ReadingInputError);
		expect((err as ReadingInputError).issues[0].message).toMatch(/no gauge-line Z \(R\) recorded/);
		expect(await count('readings')).toBe(before.r);
		expect(await count('tools')).toBe(before.t);
	});

	it('a Stop from the checks is saved only with an override and its reason, like a touch-off', async () => {
		const m = (trx: Knex.Transaction) => machine(trx, 'Bad R Mill');
		const plan = await inShop(async (trx) =>
			previewAssignment(trx, ids['A-1'], await m(trx), { t: 2, h: undefined })
		);
		// DESIGN.md §2: reference-touch H = R + L is negative; -3 + 4.125 = +1.125 is Stop.
		expect(plan.preview.value).toBe(1.125);
		expect(plan.preview.findings.some((f) => f.severity === 'stop')).toBe(true);
		const before = await count('readings');
		const err = await inShop(async (trx) =>
			assignAssembly(
				trx,
				ids['A-1'],
				await m(trx),
				assignFormSchema.parse({ machineId: ids['Bad R Mill'], t: '2' }),
				actor
			).catch((e) => e)
		);
		expect((err as ReadingInputError).issues[0].field).toBe('overrideReason');
		expect(await count('readings')).toBe(before);
		const saved = await inShop(async (trx) =>
			assignAssembly(
				trx,
				ids['A-1'],
				await m(trx),
				assignFormSchema.parse({
					machineId: ids['Bad R Mill'],
					t: '2',
					override: true,
					overrideReason: 'checking the R at the control next'
				}),
				actor
			)
		);
		const row = await inShop((trx) =>
			trx('readings').where({ id: saved.readingId }).first('override_reason', 'kind')
		);
		expect(row).toEqual({
			override_reason: 'checking the R at the control next',
			kind: 'presetter'
		});
		const finding = await inShop((trx) =>
			trx('findings')
				.where({ machine_id: ids['Bad R Mill'], kind: 'override', status: 'open' })
				.first('subject')
		);
		expect(finding).toEqual({ subject: 'H2' });
	});

	it('a pocket whose H is taken is refused with the tool that holds it', async () => {
		const form = assignFormSchema.parse({ machineId: ids['Touch Mill'], t: '7', h: '6' });
		const err = await inShop(async (trx) =>
			previewAssignment(trx, ids['A-1'], await machine(trx, 'Touch Mill'), form).catch((e) => e)
		);
		expect((err as ReadingInputError).issues[0]).toMatchObject({
			field: 'h',
			message: expect.stringMatching(/H6 is already the length offset of T6/)
		});
	});

	it('a typed assembly with a duplicate name is refused on the name field', async () => {
		const form = assemblyFormSchema.parse({
			name: 'a-1',
			gaugeLength: '4.2',
			units: 'inch'
		});
		const r = await inShop((trx) => addAssembly(trx, form, actor, 'America/Chicago'));
		expect(r).toMatchObject({ ok: false, field: 'name' });
	});
});

describe('one assembly, one place', () => {
	it('a pocket that gets another assembly ends the one it held; a past move keeps its date', async () => {
		const add = (name: string, radius = '') =>
			inShop(async (trx) => {
				const r = await addAssembly(
					trx,
					assemblyFormSchema.parse({ name, gaugeLength: '101.6', radius, units: 'mm' }),
					actor,
					'America/Chicago'
				);
				if (!r.ok) throw new Error(r.message);
				return r.id;
			});
		const [b1, b2] = [await add('B-1'), await add('B-2', '6.35')];
		const form = assignFormSchema.parse({ machineId: ids['Metric Mill'], t: '20', h: '' });
		const twoDaysAgo = new Date(Date.now() - 2 * 86_400_000);
		const first = await inShop(async (trx) =>
			assignAssembly(trx, b1, await machine(trx, 'Metric Mill'), form, actor, twoDaysAgo)
		);
		// Recorded when it was put in: the reading, the H's version and the assignment.
		const dated = await inShop((trx) =>
			trx('readings as r')
				.join('offset_versions as o', 'o.reading_id', 'r.id')
				.join('assembly_assignments as s', 's.reading_id', 'r.id')
				.where('r.id', first.readingId)
				.first('r.taken_at', 'o.created_at', 's.assigned_at')
		);
		for (const t of Object.values(dated))
			expect(new Date(t as Date).getTime()).toBe(twoDaysAgo.getTime());

		const second = await inShop(async (trx) =>
			assignAssembly(trx, b2, await machine(trx, 'Metric Mill'), form, actor)
		);
		expect(second.toolId).toBe(first.toolId);
		const a1 = await inShop((trx) => getAssembly(trx, b1));
		expect(a1!.places).toEqual([]);
		expect(a1!.assignments[0]).toMatchObject({ endReason: 'replaced' });
		const a2 = await inShop((trx) => getAssembly(trx, b2));
		expect(a2!.places).toEqual(['Metric Mill T20']);
		const pocket = await inShop((trx) => libraryToolsOf(trx, ids['Metric Mill']));
		expect(pocket.get(first.toolId)).toMatchObject({ assemblyId: b2, name: 'B-2' });
		// B-2's measured radius set the pocket's radius register, as a presetter version.
		const radius = await inShop(async (trx) =>
			componentRecord(trx, ids['Metric Mill'], 'tool', String(second.plan.h), 'radius')
		);
		expect(radius.label).toBe(`H${second.plan.h} radius`);
		expect(radius.rows).toHaveLength(1);
		expect(radius.rows[0]).toMatchObject({ value: 6.35, source: 'presetter', units: 'mm' });
		expect(radius.rows[0].detail).toMatch(/^assembly B-2, radius 6\.350 mm/);
	});
});
