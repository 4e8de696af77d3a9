import type { Knex } from 'knex';
import { afterAll, describe, expect, it } from 'vitest';
import { withShop } from '$lib/server/db/tenant';
import { findingsOfMachines, storeFindingsMany } from '$lib/server/fleet/check-batch';
import { storeFindings, subjectLabel } from '$lib/server/fleet/check';
import { machineState, toMachineRecord } from '$lib/server/offsets/machine-state';
import { componentFindings } from '$lib/server/components/findings';
import { readbackFindings, readbackHours } from '$lib/server/readbacks/findings';
import { testDb } from './db';

/**
 * The shop check reads and stores set-based (fleet/check-batch.ts); the after-a-write re-check
 * and the pages go machine by machine (machineState + readbackFindings + storeFindings). Both
 * must find and store the same thing: compared here on the seeded demo shops (their machines,
 * setups, history, read-backs and stored findings as seed.ts made them), every write rolled
 * back so the two paths start from the same rows.
 */
const knex: Knex = testDb();
afterAll(() => knex.destroy());

class Rollback extends Error {
	constructor(readonly value: unknown) {
		super('rollback');
	}
}
/** Runs `fn` in a shop transaction and rolls it back, returning what fn returned. */
async function rolledBack<T>(
	shop: { id: number; schemaName: string },
	fn: (trx: Knex.Transaction) => Promise<T>
): Promise<T> {
	try {
		await withShop(
			shop,
			async (trx) => {
				throw new Rollback(await fn(trx));
			},
			knex
		);
	} catch (e) {
		if (e instanceof Rollback) return e.value as T;
		throw e;
	}
	throw new Error('unreachable');
}

const snapshot = (trx: Knex.Transaction) =>
	trx('findings')
		.orderBy('key')
		.orderBy('id')
		.select(
			'key',
			'machine_id',
			'kind',
			'severity',
			'subject_type',
			'subject',
			'message',
			'status',
			'first_seen_at',
			'last_seen_at',
			'resolved_at',
			'comment',
			trx.raw('previous_finding_id is not null as linked')
		);

describe('the set-based shop check and the machine-by-machine one agree', async () => {
	const shops = await knex('public.shops').whereNotNull('schema_name').orderBy('id');
	const demo = shops
		.filter((s) => ['fernhill-precision', 'quarry-road-tool'].includes(s.slug))
		.map((s) => ({ id: Number(s.id), schemaName: String(s.schema_name), slug: String(s.slug) }));

	const kinds = new Set<string>();
	it('the demo shops are seeded', () => expect(demo.length).toBe(2));

	for (const shop of demo) {
		// A day after the seed: ages and unverified read-backs have grown, so more kinds appear.
		for (const [days, masterTool] of [
			[0, false],
			[1, false],
			[40, false],
			[1, true]
		] as const) {
			const how = masterTool ? ', its first machine switched to master-tool' : '';
			it(`${shop.slug}, judged ${days} days on${how}: same findings, same stored rows`, async () => {
				const at = new Date(Date.now() + days * 86_400_000);
				const result = await rolledBack(shop, async (trx) => {
					if (masterTool) {
						// The master tool's touch (R + L_m) enters the clearance planes: the master is
						// the tool with the newest touch on the first machine.
						const [first] = await trx('machines').whereNull('archived_at').orderBy('id');
						const touched = await trx('readings as r')
							.join('tools as t', 't.id', 'r.tool_id')
							.where('r.machine_id', first.id)
							.orderBy('r.taken_at', 'desc')
							.first('t.h_number');
						const h = touched?.h_number ?? 1;
						await trx('machines')
							.where({ id: first.id })
							.update({ convention: 'master-tool', master_tool_h: h });
						// The master's own offset is 0 in this convention (the engine refuses others).
						await trx('offset_versions').insert({
							machine_id: first.id,
							register_kind: 'tool',
							register: String(h),
							value: 0,
							units: first.units,
							convention: 'master-tool',
							reference_version: 1
						});
					}
					const machines = (await trx('machines').whereNull('archived_at').orderBy('id')).map(
						toMachineRecord
					);
					const hours = await readbackHours(trx, shop.id);
					const one = [];
					for (const m of machines) {
						const state = await machineState(trx, m, at);
						const names = new Map<string, string>();
						for (const s of state.checkInput.setups ?? [])
							if (s.id && s.name) names.set(s.id, s.name);
						const found = [
							...state.findings,
							...(await readbackFindings(trx, m, at, hours)),
							...(await componentFindings(trx, m, at))
						];
						one.push({
							machineId: m.id,
							findings: found,
							setupNames: names,
							labels: found.map((f) => subjectLabel(f, names))
						});
					}
					const many = (await findingsOfMachines(trx, machines, at, hours)).map((m) => ({
						machineId: m.machineId,
						findings: m.findings,
						setupNames: m.setupNames,
						labels: m.findings.map((f) => subjectLabel(f, m.setupNames))
					}));
					return { machines: machines.length, one, many };
				});
				expect(result.machines).toBeGreaterThan(0);
				expect(result.many).toEqual(result.one);
				const note = { comment: 'no longer found by the comparison' };
				// Rows that exercise every rule: a live problem no longer found (resolved), an
				// acknowledged one no longer found (resolved), an override (left alone), and each
				// problem found now also resolved before (a new row linked to the resolved one).
				const before = new Date(at.getTime() - 3_600_000);
				const m0 = result.one[0].machineId;
				const row = (key: string, kind: string, status: string) => ({
					key,
					machine_id: m0,
					kind,
					severity: 'caution',
					subject_type: 'machine',
					subject: 'Whole machine',
					message: 'seeded by the comparison',
					status,
					first_seen_at: before,
					last_seen_at: before,
					resolved_at: status === 'resolved' ? before : null
				});
				const prepare = async (trx: Knex.Transaction) => {
					await trx('findings').insert([
						row(`m${m0}|gone|machine`, 'stale-age', 'open'),
						row(`m${m0}|gone-ack|machine`, 'stale-age', 'acknowledged'),
						row(`m${m0}|override|machine`, 'override', 'open')
					]);
					const found = result.one.flatMap((m) =>
						m.findings.map((f) => `m${m.machineId}|${f.key}`)
					);
					for (const key of found.slice(0, 3)) {
						await trx('findings').where({ key }).whereNot('status', 'resolved').delete();
						await trx('findings').insert(row(key, 'stale-age', 'resolved'));
					}
				};
				// Stored: machine by machine, and all at once, from the same starting rows.
				const byOne = await rolledBack(shop, async (trx) => {
					await prepare(trx);
					const sum = { opened: 0, stillOpen: 0, resolved: 0 };
					for (const m of result.one) {
						const r = await storeFindings(trx, m.machineId, m.findings, at, note, m.setupNames);
						sum.opened += r.opened;
						sum.stillOpen += r.stillOpen;
						sum.resolved += r.resolved;
					}
					return { sum, rows: await snapshot(trx) };
				});
				const byMany = await rolledBack(shop, async (trx) => {
					await prepare(trx);
					const sum = await storeFindingsMany(trx, result.many, at, note);
					return { sum, rows: await snapshot(trx) };
				});
				expect(byMany.sum).toEqual(byOne.sum);
				expect(byMany.rows).toEqual(byOne.rows);
				for (const r of byOne.rows) kinds.add(`${r.kind}:${r.status}`);
			});
		}
	}

	it('the comparison covered open and resolved findings of several kinds', () => {
		console.log([...kinds].sort().join(', '));
		expect([...kinds].filter((k) => k.endsWith(':open')).length).toBeGreaterThan(3);
		expect([...kinds].some((k) => k.endsWith(':resolved'))).toBe(true);
	});
});
