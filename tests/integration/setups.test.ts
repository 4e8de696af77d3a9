import { mkdtemp, readdir, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseLoadProgram } from '$lib/offsets';
import type { SetupForm } from '$lib/schemas/setups';
import { withShop } from '$lib/server/db/tenant';
import { createShopWithOwner } from '$lib/server/shops/create';
import { setupLoadProgram } from '$lib/server/setups/load';
import { addSetupPhoto, PHOTO_MAX_BYTES } from '$lib/server/setups/photos';
import { getSetupDetail } from '$lib/server/setups/detail';
import { listSetups } from '$lib/server/setups/queries';
import { recordSignoff } from '$lib/server/setups/signoff';
import { copySetup } from '$lib/server/setups/copy';
import { changeSetupStatus } from '$lib/server/setups/status';
import { createSetup, updateSetup } from '$lib/server/setups/write';
import type { Actor } from '$lib/server/actor';
import { engineMachine, getMachine } from '$lib/server/offsets/machine-state';
import { testDb, uniqueSuffix } from './db';
import { setEnv } from './env';
import { insertTwoFixtureMill } from './two-fixture-mill';

const knex: Knex = testDb();
let uploads: string;
let shop: { id: number; schemaName: string; slug: string };
let actor: Actor;
/** Inch machine, reference-touch, ISO-style; and a metric RS274NGC-style one. */
let mill: { id: number; g54: number; g55: number; g56: number; t1: number; t2: number };
let rsMill: { id: number; p3: number };
let otherMachineFixture: number;

const inShop = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shop, fn, knex);

beforeAll(async () => {
	uploads = await mkdtemp(join(tmpdir(), 'dk-setup-photos-'));
	setEnv('UPLOADS_DIR', uploads);
	const email = `setups-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: 'Setups Test Shop', slug: `setups-${uniqueSuffix()}` },
		{ name: 'Sam Setter', email, password: 'correct-horse-1' }
	);
	shop = created.shop;
	actor = { id: created.userId, email };

	await inShop(async (trx) => {
		const m = await insertTwoFixtureMill(trx, [{ register: 'G56', name: 'Spare, never measured' }]);
		mill = {
			id: m.id,
			g54: m.fixtures.G54,
			g55: m.fixtures.G55,
			g56: m.fixtures.G56,
			t1: m.t1,
			t2: m.t2
		};

		const [rs] = await trx('machines')
			.insert({
				name: 'Test Metric',
				units: 'mm',
				z_travel: 510,
				resolution: 0.001,
				control_style: 'rs274ngc',
				convention: 'reference-touch'
			})
			.returning('id');
		await trx('reference_surfaces').insert({
			machine_id: rs.id,
			version: 1,
			instrument: 'tool setter',
			height: 50
		});
		const [p3] = await trx('fixtures')
			.insert({ machine_id: rs.id, register: 'G54.1 P3', name: 'Pallet 3' })
			.returning('id');
		await trx('offset_versions').insert({
			machine_id: rs.id,
			register_kind: 'work',
			register: 'G54.1 P3',
			value: 45.5,
			units: 'mm',
			convention: 'reference-touch',
			reference_version: 1
		});
		rsMill = { id: Number(rs.id), p3: Number(p3.id) };
		otherMachineFixture = rsMill.p3;
	});
});

afterAll(async () => {
	await knex.destroy();
	await rm(uploads, { recursive: true, force: true });
});

const pumpHousing = (): SetupForm => ({
	machineId: mill.id,
	name: 'Pump housing, ops A and B',
	job: 'Job 1 — 40 pcs',
	clearanceMargin: 0.5,
	fixtures: [
		{ fixtureId: mill.g54, obstacleHeight: 3.125 },
		{ fixtureId: mill.g55, obstacleHeight: 1.875 }
	],
	toolIds: [mill.t1, mill.t2],
	ops: [
		{ name: 'Op A — face and pocket', fixtureId: mill.g54, notes: '' },
		{ name: 'Op B — back face', fixtureId: mill.g55, notes: 'flip on dowels' }
	]
});

async function countRows(table: string): Promise<number> {
	return inShop(async (trx) => Number((await trx(table).count({ n: '*' }))[0].n));
}

describe('setups on the real PostgreSQL', () => {
	let setupId: number;

	it('two fixtures at different heights get the engine clearance planes', async () => {
		const r = await inShop((trx) => createSetup(trx, pumpHousing(), actor));
		if (!r.ok) throw new Error(JSON.stringify(r.issues));
		setupId = r.value;
		const detail = (await inShop((trx) => getSetupDetail(trx, setupId)))!;
		// DESIGN.md §4: plane_k = tallest obstacle + margin − h_k, in fixture k's coordinates.
		// Reference-touch: h_k = W_k (G54 2.8125 in, G55 1.0630 in). Tallest on the table:
		// max(3.125, 1.875, 2.8125, 1.0630) = 3.125 in.
		// G54: 3.125 + 0.5 − 2.8125 = 0.8125 in;  G55: 3.125 + 0.5 − 1.0630 = 2.5620 in.
		expect(detail.clearance.tallest).toBe(3.125);
		expect(detail.clearance.planes).toEqual({ G54: 0.8125, G55: 2.562 });
		expect(detail.fixtures.map((f) => [f.register, f.clearance])).toEqual([
			['G54', 0.8125],
			['G55', 2.562]
		]);
		expect(detail.clearance.problems).toEqual([]);
		expect(detail.status).toBe('planned');
		expect(detail.ops.map((o) => [o.name, o.register])).toEqual([
			['Op A — face and pocket', 'G54'],
			['Op B — back face', 'G55']
		]);
		expect(detail.history).toMatchObject([{ from: null, to: 'planned', byName: 'Sam Setter' }]);
	});

	it('writes a load program for the setup registers that parses back to the same values', async () => {
		const detail = (await inShop((trx) => getSetupDetail(trx, setupId)))!;
		const program = setupLoadProgram(detail);
		if (!program.ok) throw new Error(program.reasons.join('; '));
		expect(program.filename).toBe('test-mill-pump-housing-ops-a-and-b.nc');
		const machine = (await inShop((trx) => getMachine(trx, mill.id)))!;
		const parsed = parseLoadProgram(program.text, engineMachine(machine));
		expect(parsed.work).toEqual({ G54: 2.8125, G55: 1.063 });
		expect(parsed.tools).toEqual({ '1': -15.8421, '2': -14.7502 });
		expect(program.text).toContain('G10 L2 P1 Z2.8125');
		expect(program.text).toContain('G10 L10 P2 R-14.7502');
	});

	it('refuses bad references and negative heights, naming the field, and writes nothing', async () => {
		const before = await Promise.all(
			['setups', 'setup_fixtures', 'setup_tools', 'setup_ops'].map(countRows)
		);
		const bad = pumpHousing();
		bad.fixtures.push({ fixtureId: otherMachineFixture, obstacleHeight: 1 });
		bad.toolIds.push(999_999);
		bad.ops.push({ name: 'Op C', fixtureId: mill.g56, notes: '' });
		const r = await inShop((trx) => createSetup(trx, bad, actor));
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.issues.map((i) => i.field)).toEqual([
			'fixtures[2].fixtureId',
			'toolIds[2]',
			'ops[2].fixtureId'
		]);
		expect(r.issues[0].message).toMatch(/not a fixture of Test Mill/);
		expect(r.issues[1].message).toMatch(/Tool 999999 is not a tool of Test Mill/);
		const after = await Promise.all(
			['setups', 'setup_fixtures', 'setup_tools', 'setup_ops'].map(countRows)
		);
		expect(after).toEqual(before);

		// zod (the form schema) refuses negative heights and nameless ops before the database.
		const { setupFormSchema } = await import('$lib/schemas/setups');
		const parsed = setupFormSchema.safeParse({
			...pumpHousing(),
			fixtures: [{ fixtureId: mill.g54, obstacleHeight: -1 }],
			ops: [{ name: '  ', fixtureId: 0, notes: '' }]
		});
		expect(parsed.success).toBe(false);
		const issues = parsed.error!.issues.map((i) => [i.path.join('.'), i.message]);
		expect(issues).toContainEqual([
			'fixtures.0.obstacleHeight',
			'Obstacle height cannot be negative: it is a height above the reference.'
		]);
		expect(issues).toContainEqual([
			'ops.0.name',
			'Each op needs a name, e.g. "Op A — face and drill".'
		]);
	});

	it('moves planned → on-machine → proven → closed, one step at a time, with who and when', async () => {
		const skip = await inShop((trx) => changeSetupStatus(trx, setupId, 'proven', actor));
		expect(skip).toEqual({
			ok: false,
			issues: [
				{
					field: 'to',
					message: 'A setup that is planned cannot become proven: next is on machine.'
				}
			]
		});
		const on = await inShop((trx) =>
			changeSetupStatus(trx, setupId, 'on-machine', actor, 'to on-machine')
		);
		expect(on).toEqual({ ok: true, value: 'on-machine' });
		// Proven only with a sign-off (entered by / verified at the control by / first part by).
		const unsigned = await inShop((trx) => changeSetupStatus(trx, setupId, 'proven', actor));
		expect(unsigned.ok).toBe(false);
		expect(!unsigned.ok && unsigned.issues[0].message).toMatch(/only with its sign-off/);
		await inShop((trx) =>
			recordSignoff(
				trx,
				setupId,
				{
					enteredBy: 'Sam Setter',
					enteredOn: '2026-12-03',
					verifiedBy: 'Vera Verify',
					verifiedOn: '2026-12-03',
					firstPartBy: 'Quinn QC',
					firstPartOn: '2026-12-03',
					note: ''
				},
				actor
			)
		);
		const proven = await inShop((trx) =>
			changeSetupStatus(trx, setupId, 'proven', actor, 'to proven')
		);
		expect(proven).toEqual({ ok: true, value: 'proven' });
		// Proven setups are not edited any more: they are copied.
		const edit = await inShop((trx) => updateSetup(trx, setupId, pumpHousing(), actor));
		expect(edit.ok).toBe(false);
		const closed = await inShop((trx) => changeSetupStatus(trx, setupId, 'closed', actor));
		expect(closed.ok).toBe(true);
		const again = await inShop((trx) => changeSetupStatus(trx, setupId, 'planned', actor));
		expect(again.ok).toBe(false);

		const detail = (await inShop((trx) => getSetupDetail(trx, setupId)))!;
		expect(detail.history.map((h) => [h.from, h.to, h.byName])).toEqual([
			[null, 'planned', 'Sam Setter'],
			['planned', 'on-machine', 'Sam Setter'],
			['on-machine', 'proven', 'Sam Setter'],
			['proven', 'closed', 'Sam Setter']
		]);
		const audited = await inShop((trx) =>
			trx('audit_log').where({ action: 'setup.status', target: `setup ${setupId}` })
		);
		expect(audited).toHaveLength(3);
		// The state history is append-only in the database.
		await expect(
			inShop((trx) => trx('setup_status_changes').where({ setup_id: setupId }).delete())
		).rejects.toThrow();
		// The database refuses a state outside the four.
		await expect(
			inShop((trx) => trx('setups').where({ id: setupId }).update({ status: 'running' }))
		).rejects.toThrow(/setups_status_check/);
	});

	it('copies a closed setup into a new planned one with the same fixtures, heights, tools and ops', async () => {
		const r = await inShop((trx) => copySetup(trx, setupId, 'Pump housing, again', actor));
		if (!r.ok) throw new Error(JSON.stringify(r.issues));
		const copy = (await inShop((trx) => getSetupDetail(trx, r.value.id)))!;
		expect(copy.id).not.toBe(setupId);
		expect(copy.status).toBe('planned');
		expect(copy.name).toBe('Pump housing, again');
		expect(copy.fixtures.map((f) => [f.register, f.obstacleHeight])).toEqual([
			['G54', 3.125],
			['G55', 1.875]
		]);
		expect(copy.tools.map((t) => t.t)).toEqual([1, 2]);
		expect(copy.ops.map((o) => [o.name, o.register, o.notes])).toEqual([
			['Op A — face and pocket', 'G54', ''],
			['Op B — back face', 'G55', 'flip on dowels']
		]);
		expect(copy.clearance.planes).toEqual({ G54: 0.8125, G55: 2.562 });
		expect(copy.history).toMatchObject([{ to: 'planned', note: `copied from setup ${setupId}` }]);
		const planned = await inShop((trx) =>
			listSetups(trx, { machineId: mill.id, status: 'planned' })
		);
		expect(planned.map((s) => s.id)).toEqual([r.value.id]);
	});

	it('refuses a load program with G54.1 on an RS274NGC-style machine, with the engine reason', async () => {
		const r = await inShop((trx) =>
			createSetup(
				trx,
				{
					machineId: rsMill.id,
					name: 'Pallet job',
					job: '',
					clearanceMargin: 25,
					fixtures: [{ fixtureId: rsMill.p3, obstacleHeight: 80 }],
					toolIds: [],
					ops: []
				},
				actor
			)
		);
		if (!r.ok) throw new Error(JSON.stringify(r.issues));
		const detail = (await inShop((trx) => getSetupDetail(trx, r.value)))!;
		// plane = max(80, 45.5) + 25 − 45.5 = 59.5 mm
		expect(detail.clearance.planes).toEqual({ 'G54.1 P3': 59.5 });
		const program = setupLoadProgram(detail);
		expect(program.ok).toBe(false);
		if (program.ok) return;
		expect(program.reasons[0]).toMatch(/^Work offset G54\.1 P3 \(45\.5\) cannot be written/);
		expect(program.reasons[0]).toMatch(/no G54\.1 P registers/);
	});

	it('refuses a setup load program while one of its registers was never measured', async () => {
		const form = pumpHousing();
		form.fixtures.push({ fixtureId: mill.g56, obstacleHeight: 2 });
		const r = await inShop((trx) => createSetup(trx, form, actor));
		if (!r.ok) throw new Error(JSON.stringify(r.issues));
		const detail = (await inShop((trx) => getSetupDetail(trx, r.value)))!;
		expect(detail.clearance.problems[0]).toMatch(/G56 has never been measured/);
		const program = setupLoadProgram(detail);
		expect(program.ok).toBe(false);
		if (!program.ok) expect(program.reasons[0]).toMatch(/^G56 has never been measured/);
	});
});

describe('setup photos', () => {
	let setupId: number;
	beforeAll(async () => {
		const r = await inShop((trx) =>
			createSetup(trx, { ...pumpHousing(), name: 'Photo job' }, actor)
		);
		if (!r.ok) throw new Error('setup not created');
		setupId = r.value;
	});

	const png = () =>
		new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48]);
	const add = (file: unknown) =>
		inShop((trx) => addSetupPhoto(trx, shop.schemaName, setupId, file, '', actor));
	const photoRows = () =>
		inShop((trx) => trx('setup_photos').where({ setup_id: setupId }).select('*'));
	async function storedFiles(): Promise<string[]> {
		try {
			return await readdir(join(uploads, shop.schemaName, 'setups', String(setupId)));
		} catch {
			return [];
		}
	}

	it('keeps a real PNG on disk under the shop schema and records it', async () => {
		const r = await add(new File([png()], 'g55-plate.png', { type: 'image/png' }));
		expect(r.ok).toBe(true);
		const rows = await photoRows();
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({ content_type: 'image/png', original_name: 'g55-plate.png' });
		expect(rows[0].storage_key).toMatch(new RegExp(`^${shop.schemaName}/setups/${setupId}/`));
		expect(await storedFiles()).toHaveLength(1);
	});

	it('refuses a file whose name says JPEG but whose bytes are a PDF, naming the file', async () => {
		const pdf = new TextEncoder().encode('%PDF-1.7\n%âãÏÓ\n1 0 obj');
		const r = await add(new File([pdf], 'fixture.jpg', { type: 'image/jpeg' }));
		expect(r).toEqual({
			ok: false,
			message: '"fixture.jpg" is a PDF document: photos must be JPEG, PNG or WebP images.'
		});
		expect(await photoRows()).toHaveLength(1);
		expect(await storedFiles()).toHaveLength(1);
	});

	it('refuses a photo over 8 MB, naming the file and its size, and writes nothing', async () => {
		const big = new Uint8Array(PHOTO_MAX_BYTES + 1024 * 1024);
		big.set([0xff, 0xd8, 0xff, 0xe0]);
		const r = await add(new File([big], 'table-overview.jpg', { type: 'image/jpeg' }));
		expect(r).toEqual({
			ok: false,
			message:
				'"table-overview.jpg" is 9.0 MB; photos can be 8 MB at most. Take it at a lower resolution or crop it.'
		});
		expect(await photoRows()).toHaveLength(1);
		expect(await storedFiles()).toHaveLength(1);
	});

	it('refuses a missing file', async () => {
		expect(await add(null)).toEqual({
			ok: false,
			message: 'Photo: choose a JPEG, PNG or WebP file to upload.'
		});
	});
});
