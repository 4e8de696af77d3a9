import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readbackSchema } from '$lib/schemas/readback';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { digestFindings } from '$lib/server/fleet/digest';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { readbackFindings } from '$lib/server/readbacks/findings';
import { recordReadback } from '$lib/server/readbacks/record';
import { machineVerification } from '$lib/server/readbacks/status';
import { ReadingInputError } from '$lib/server/readings/record';
import { provisionShop } from '$lib/server/shops/provision';
import { addFixture } from '$lib/server/tools/service';
import { testDb, uniqueSuffix } from './db';
import { insertTwoFixtureMill } from './two-fixture-mill';

/**
 * Read-backs against the real PostgreSQL (issue 16): records are append-only at the database,
 * a register's verification follows its offset versions, and mismatches become findings at once.
 * Each run provisions its own shop so the demo data is never touched.
 */
const knex: Knex = testDb();
let shop: ShopRef;
let machineId: number;
const actor = { id: 1, email: 'reader@example.test' };
const HOUR = 3_600_000;

const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const stateOf = async (kind: 'work' | 'tool', register: string) =>
	(await inShop((trx) => machineVerification(trx, machineId))).find(
		(v) => v.kind === kind && v.register === register
	)!.state;
const typed = (values: { work?: Record<string, string>; tools?: Record<string, string> }) =>
	readbackSchema.parse({ source: 'typed', values });

afterAll(() => knex.destroy());

beforeAll(async () => {
	shop = await provisionShop(knex, { name: 'Read Back', slug: `rb-${uniqueSuffix()}` });
	machineId = await withShop(
		shop,
		async (trx) => {
			const m = await insertTwoFixtureMill(trx);
			const [s] = await trx('setups')
				.insert({
					machine_id: m.id,
					name: 'Pump housing',
					status: 'on-machine',
					clearance_margin: 1
				})
				.returning('id');
			await trx('setup_fixtures').insert({ setup_id: s.id, fixture_id: m.fixtures.G54 });
			await trx('setup_tools').insert({ setup_id: s.id, tool_id: m.t2 });
			return m.id;
		},
		knex
	);
});

describe('read-backs', () => {
	it('a transposed digit at the control: compared, named, stored, and a Stop finding opened at once', async () => {
		// H2 is -14.7502 in; the control shows -14.7052 (two neighbouring digits swapped).
		const r = await inShop((trx, m) =>
			recordReadback(
				trx,
				shop.id,
				m,
				actor,
				typed({ work: { G54: '2.8125' }, tools: { 2: '-14.7052' } })
			)
		);
		expect(r.comparison.equal).toBe(1);
		expect(r.comparison.different).toBe(1);
		const h2 = r.comparison.rows.find((x) => x.label === 'H2')!;
		expect(h2.causes[0].kind).toBe('transposed-digits');
		expect(await stateOf('work', 'G54')).toBe('verified');
		expect(await stateOf('tool', '2')).toBe('mismatched');
		expect(await stateOf('tool', '1')).toBe('unverified'); // never read back
		const findings = await inShop((trx) =>
			trx('findings').where({ machine_id: machineId, kind: 'readback-mismatch' })
		);
		expect(findings).toHaveLength(1);
		expect(findings[0]).toMatchObject({ severity: 'stop', status: 'open', subject: 'H2' });
		expect(findings[0].message).toContain('H2 at the control holds -14.7052 in');
		expect(findings[0].message).toContain('two digits swapped');
		// The morning digest lists it like any other finding.
		const digest = await inShop((trx) => digestFindings(trx, new Date()));
		expect(digest.find((d) => d.subject === 'H2')?.message).toMatch(/control holds -14\.7052 in/);
		const board = await inShop((trx) => fleetBoard(trx));
		expect(board.machines.find((m) => m.id === machineId)!.atControl).toEqual({
			inUse: 2,
			unverified: 0,
			mismatched: 1
		});
	});

	it('read-back records are append-only at the database: UPDATE, DELETE and TRUNCATE refused', async () => {
		for (const sql of [
			'update readbacks set note = ?',
			'delete from readbacks where note <> ?',
			'update readback_values set value = 0 where register <> ?',
			'delete from readback_values where register <> ?'
		]) {
			await expect(inShop((trx) => trx.raw(sql, ['x']))).rejects.toThrow(/append-only/);
		}
		await expect(inShop((trx) => trx.raw('truncate readback_values'))).rejects.toThrow(
			/append-only/
		);
		expect(await stateOf('tool', '2')).toBe('mismatched');
	});

	it('reading back again correctly verifies the register and resolves the finding', async () => {
		const file =
			'%\r\nO0001\r\n(SAVED OFFSETS)\r\nG20\r\nG10 L2 P1 X0. Y0. Z2.8125\r\nG10 L10 P2 R-14.7502\r\nG10 L11 P2 R0.\r\n%\r\n';
		const r = await inShop((trx, m) =>
			recordReadback(
				trx,
				shop.id,
				m,
				actor,
				readbackSchema.parse({ source: 'file', fileName: 'offsets.nc', text: file })
			)
		);
		expect(r.comparison.different).toBe(0);
		expect(r.comparison.onlyInDatumkeep.map((o) => o.label)).toEqual(['G55', 'H1']);
		expect(await stateOf('tool', '2')).toBe('verified');
		const f = await inShop((trx) =>
			trx('findings').where({ machine_id: machineId, kind: 'readback-mismatch' }).first()
		);
		expect(f.status).toBe('resolved');
		const stored = await inShop((trx) => trx('readbacks').where({ id: r.id }).first());
		expect(stored.file_text).toBe(file);
	});

	it('verification follows new offset versions: a new G54 is not verified until read back', async () => {
		await inShop((trx) =>
			trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'work',
				register: 'G54',
				value: 2.8131,
				units: 'inch',
				convention: 'reference-touch',
				reference_version: 1
			})
		);
		expect(await stateOf('work', 'G54')).toBe('unverified');
		// Not yet past the shop's 8 hours: no finding. Past them: one, naming G54.
		const soon = await inShop((trx, m) => readbackFindings(trx, m, new Date(), 8));
		expect(soon).toEqual([]);
		const later = await inShop((trx, m) =>
			readbackFindings(trx, m, new Date(Date.now() + 9 * HOUR), 8)
		);
		expect(later.map((f) => [f.kind, f.severity])).toEqual([['unverified', 'caution']]);
		expect(later[0].message).toMatch(/^G54 was changed in Datumkeep more than 8 hours ago/);
		// The old value still at the control is named as stale.
		const r = await inShop((trx, m) =>
			recordReadback(trx, shop.id, m, actor, typed({ work: { G54: '2.8125' } }))
		);
		expect(r.comparison.rows[0].causes.map((c) => c.kind)).toEqual(['stale']);
		expect(await stateOf('work', 'G54')).toBe('mismatched');
	});

	it('bad input is refused with the register named, and nothing is written', async () => {
		const before = await inShop((trx) => trx('readbacks').count('* as n'));
		await expect(
			inShop((trx, m) =>
				recordReadback(
					trx,
					shop.id,
					m,
					actor,
					typed({ tools: { 2: '-14.75021' }, work: { G60: '1' } })
				)
			)
		).rejects.toSatisfy(
			(e) =>
				e instanceof ReadingInputError &&
				e.issues.some((i) => /G60/.test(i.message)) &&
				e.issues.some((i) => /H2 has 5 decimals/.test(i.message))
		);
		await expect(
			inShop((trx, m) =>
				recordReadback(
					trx,
					shop.id,
					m,
					actor,
					readbackSchema.parse({ source: 'file', text: 'G0 X1.' })
				)
			)
		).rejects.toBeInstanceOf(ReadingInputError);
		const after = await inShop((trx) => trx('readbacks').count('* as n'));
		expect(after).toEqual(before);
	});

	it('extended work offsets are a machine setting: fixtures only up to the number the machine has', async () => {
		const add = (register: string) =>
			inShop((trx) =>
				addFixture(trx, machineId, { register, name: register, description: '' }, actor)
			);
		// insertTwoFixtureMill inserts no setting: 0 extended work offsets.
		const refused = await add('G54.1 P1');
		expect(refused).toMatchObject({ ok: false, field: 'register' });
		expect(!refused.ok && refused.message).toMatch(/set to have 0 extended work offsets/);
		await inShop((trx) =>
			trx('machines')
				.where({ id: machineId })
				.update({ extended_work_offsets: 2, extended_address: 'G54 P' })
		);
		expect(await add('G54.1 P2')).toMatchObject({ ok: true });
		const beyond = await add('G54.1 P3');
		expect(!beyond.ok && beyond.message).toMatch(/2 extended work offsets \(G54 P1…\)/);
		await expect(
			inShop((trx) =>
				trx('machines').where({ id: machineId }).update({ extended_work_offsets: 49 })
			)
		).rejects.toThrow(/machines_extended_work_offsets_range/);
	});
});
