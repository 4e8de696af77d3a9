import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toolReadingSchema } from '$lib/schemas/readings';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { actOnFinding } from '$lib/server/fleet/findings';
import { recheckMachine } from '$lib/server/fleet/recheck';
import { getMachine, type MachineRecord } from '$lib/server/offsets/machine-state';
import { recordToolReading } from '$lib/server/readings/record';
import { testDb } from './db';
import { newTestMill } from './test-mill';

/**
 * Findings follow the data (a safety gate): a write that changes a machine's offsets re-runs its
 * checks in the same transaction, so a re-measure resolves the finding it fixes at once; a
 * finding that comes back after being resolved is a new row linked to the resolved one; an
 * override is a finding of its own until a reading without override replaces the value.
 */
const knex: Knex = testDb();
let shop: ShopRef;
let actor: { id: number; email: string };
let machineId: number;
let toolId: number;
const DAY = 86_400_000;

const tool = (over: Partial<ReturnType<typeof toolReadingSchema.parse>> = {}) =>
	toolReadingSchema.parse({ machineZ: '-14.7502', ...over });
const inShop = <T>(fn: (trx: Knex.Transaction, m: MachineRecord) => Promise<T>) =>
	withShop(shop, async (trx) => fn(trx, (await getMachine(trx, machineId))!), knex);
const rows = () =>
	withShop(shop, (trx) => trx('findings').orderBy('id').select('*'), knex) as Promise<
		Record<string, never>[]
	>;

beforeAll(async () => {
	({ shop, actor, machineId } = await newTestMill(knex, {
		slug: 'follow',
		person: 'Fay Follow',
		shopName: 'Follow Test',
		machineName: 'Follow Mill',
		referenceDaysAgo: 60
	}));
	await withShop(
		shop,
		async (trx) => {
			const [t] = await trx('tools')
				.insert({ machine_id: machineId, t_number: 3, h_number: 3, description: 'end mill' })
				.returning('id');
			toolId = Number(t.id);
			// H3 measured 40 days ago: past the 30-day limit (stale-age).
			const at = new Date(Date.now() - 40 * DAY);
			const [r] = await trx('readings')
				.insert({
					machine_id: machineId,
					kind: 'tool-touch',
					tool_id: toolId,
					machine_z: -14.7502,
					reference_version: 1,
					taken_by: actor.id,
					taken_at: at
				})
				.returning('id');
			await trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: '3',
				value: -14.7502,
				units: 'inch',
				convention: 'reference-touch',
				reading_id: r.id,
				reference_version: 1,
				created_by: actor.id,
				created_at: at
			});
		},
		knex
	);
});
afterAll(() => knex.destroy());

describe('findings follow the data (real PostgreSQL)', () => {
	it('a re-measure resolves the stale finding in the same request, with a "resolved by" note', async () => {
		await inShop((trx, m) => recheckMachine(trx, m, { what: 'a test check' }));
		const open = (await rows()).filter((r) => r.status === 'open');
		expect(open.map((r) => r.kind)).toEqual(['stale-age']);
		await inShop((trx, m) => recordToolReading(trx, m, toolId, tool(), actor));
		// No background check ran: the save itself resolved it.
		const after = (await rows()).find((r) => r.id === open[0].id)!;
		expect(after.status).toBe('resolved');
		expect(after.comment).toMatch(/^resolved by the new reading of H3 at \d\d:\d\d UTC$/);
		expect(Number(after.resolved_by)).toBe(actor.id);
		expect((await rows()).filter((r) => r.status !== 'resolved')).toEqual([]);
	});

	it('a new problem appears in the same request, and one that recurs is a new linked row', async () => {
		// -15.0502: a jump of 0.3 in with no tool change recorded (a caution, saved normally).
		await inShop((trx, m) =>
			recordToolReading(trx, m, toolId, tool({ machineZ: '-15.0502' }), actor)
		);
		const jump = (await rows()).find((r) => r.kind === 'jump' && r.status === 'open')!;
		expect(jump).toBeTruthy();
		expect(jump.previous_finding_id).toBeNull();
		// A lead resolves it by hand without fixing anything…
		await inShop((trx) => actOnFinding(trx, Number(jump.id), 'resolve', 'measured twice', actor));
		// …and the next check still finds it: a new row with its own first-found time, linked.
		await new Promise((r) => setTimeout(r, 20));
		await inShop((trx, m) => recheckMachine(trx, m, { what: 'a test check' }));
		const jumps = (await rows()).filter((r) => r.kind === 'jump');
		expect(jumps).toHaveLength(2);
		const [old, fresh] = jumps;
		expect(old.status).toBe('resolved');
		expect(old.comment).toBe('measured twice');
		expect(fresh.status).toBe('open');
		expect(fresh.previous_finding_id).toBe(old.id);
		expect(new Date(fresh.first_seen_at).getTime()).toBeGreaterThan(
			new Date(old.resolved_at).getTime()
		);
		// Checking again changes nothing: still two rows, the live one updated in place.
		await inShop((trx, m) => recheckMachine(trx, m, { what: 'a test check' }));
		expect((await rows()).filter((r) => r.kind === 'jump')).toHaveLength(2);
	});

	it('an override is an open Stop finding until a reading without override replaces the value', async () => {
		// -1.5050: the decimal point one place left of -15.0502 — a Stop.
		await inShop((trx, m) =>
			recordToolReading(
				trx,
				m,
				toolId,
				tool({ machineZ: '-1.5050', override: true, overrideReason: 'Testing the override' }),
				actor
			)
		);
		const o = (await rows()).find((r) => r.kind === 'override')!;
		expect(o).toMatchObject({ status: 'open', severity: 'stop', subject: 'H3' });
		expect(o.message).toContain('Testing the override');
		expect(o.message).toContain('Fay Follow');
		await inShop((trx, m) => recheckMachine(trx, m, { what: 'a test check' }));
		expect((await rows()).find((r) => r.id === o.id)!.status).toBe('open');
		await inShop((trx, m) =>
			recordToolReading(trx, m, toolId, tool({ machineZ: '-15.0503' }), actor)
		);
		const done = (await rows()).find((r) => r.id === o.id)!;
		expect(done.status).toBe('resolved');
		expect(done.comment).toMatch(/^resolved by the new reading of H3 \(reading #\d+\)$/);
	});
});
