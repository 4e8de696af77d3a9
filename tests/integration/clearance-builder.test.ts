import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { clearancePlanes } from '$lib/offsets';
import { withShop, type ShopRef } from '$lib/server/db/tenant';
import { getMachine, machineState } from '$lib/server/offsets/machine-state';
import { programSetupFor } from '$lib/server/programs/input';
import { setupFromParam } from '$lib/server/setups/load';
import { getSetupDetail } from '$lib/server/setups/detail';
import { provisionShop } from '$lib/server/shops/provision';
import { testDb, uniqueSuffix } from './db';
import { insertTwoFixtureMill } from './two-fixture-mill';

/**
 * One clearance-plane builder: the offset checks (machineState → checkOffsets), the
 * setup page (getSetupDetail), the setup sheet (setupFromParam, its loader) and the program
 * check (programSetupFor) give the same planes — with a tall fixture whose offset was never
 * measured (still an obstacle on the table), and on a master-tool machine.
 * Engine definition (DESIGN.md §4): plane = tallest obstacle + margin − h_k, rounded up.
 */
const knex: Knex = testDb();
let shop: ShopRef;
afterAll(() => knex.destroy());

async function setupOn(
	trx: Knex.Transaction,
	machineId: number,
	fixtures: { register: string; obstacle: number }[],
	tools: number[]
): Promise<number> {
	const [s] = await trx('setups')
		.insert({ machine_id: machineId, name: 'Planes', status: 'on-machine', clearance_margin: 1 })
		.returning('id');
	for (const f of fixtures) {
		const fx = await trx('fixtures').where({ machine_id: machineId, register: f.register }).first();
		await trx('setup_fixtures').insert({
			setup_id: s.id,
			fixture_id: fx.id,
			obstacle_height: f.obstacle
		});
	}
	for (const t of tools) await trx('setup_tools').insert({ setup_id: s.id, tool_id: t });
	return Number(s.id);
}

/** The planes from each of the four consumers. */
async function fourWays(machineId: number, setupId: number) {
	return withShop(
		shop,
		async (trx) => {
			const machine = (await getMachine(trx, machineId))!;
			const state = await machineState(trx, machine);
			const engine = state.checkInput.setups!.find((s) => s.id === String(setupId))!;
			const page = (await getSetupDetail(trx, setupId))!;
			const sheet = await setupFromParam(trx, String(setupId));
			const program = await programSetupFor(trx, page);
			if (!program.ok) throw new Error(program.reasons.join('; '));
			return {
				checks: clearancePlanes(engine),
				page: page.clearance.planes,
				sheet: sheet.clearance.planes,
				program: clearancePlanes(program.input.programSetup.setup)
			};
		},
		knex
	);
}

beforeAll(async () => {
	shop = await provisionShop(knex, { name: 'Planes Test', slug: `planes-${uniqueSuffix()}` });
});

describe('one clearance-plane builder', () => {
	it('reference-touch: a tall unmeasured fixture raises every plane in all four', async () => {
		const { machineId, setupId } = await withShop(
			shop,
			async (trx) => {
				const m = await insertTwoFixtureMill(trx, [{ register: 'G56', name: 'Tall fixture' }]);
				const setupId = await setupOn(
					trx,
					m.id,
					[
						{ register: 'G54', obstacle: 3.125 },
						{ register: 'G55', obstacle: 1.875 },
						{ register: 'G56', obstacle: 6 }
					],
					[m.t1, m.t2]
				);
				return { machineId: m.id, setupId };
			},
			knex
		);
		const all = await fourWays(machineId, setupId);
		// 6 (G56, never measured) + 1 − h_k: G54 2.8125 → 4.1875; G55 1.0630 → 5.9370.
		const expected = { G54: 4.1875, G55: 5.937 };
		expect(all).toEqual({ checks: expected, page: expected, sheet: expected, program: expected });
	});

	it('master-tool: planes worked out from the master tool’s touch on the reference', async () => {
		const { machineId, setupId } = await withShop(
			shop,
			async (trx) => {
				const [m] = await trx('machines')
					.insert({
						name: 'Master Mill',
						units: 'inch',
						z_travel: 20,
						resolution: 0.0001,
						control_style: 'iso',
						convention: 'master-tool',
						master_tool_h: 1
					})
					.returning('id');
				await trx('reference_surfaces').insert({
					machine_id: m.id,
					version: 1,
					instrument: '1-2-3 block',
					height: 3
				});
				await trx('fixtures').insert([
					{ machine_id: m.id, register: 'G54', name: 'Vise' },
					{ machine_id: m.id, register: 'G55', name: 'Plate' }
				]);
				const [t1, t2] = await trx('tools')
					.insert([
						{ machine_id: m.id, t_number: 1, h_number: 1, description: 'Master' },
						{ machine_id: m.id, t_number: 2, h_number: 2, description: 'End mill' }
					])
					.returning('id');
				// The master's tip on the reference through a 0.1 in block: R + L_m = -15.9421.
				await trx('readings').insert({
					machine_id: m.id,
					kind: 'tool-touch',
					tool_id: t1.id,
					machine_z: -15.8421,
					block_height: 0.1,
					reference_version: 1
				});
				// W = (R + L_m) + h (DESIGN.md §2): h 2.8125 and 1.0630.
				const rows: [string, string, number][] = [
					['work', 'G54', -13.1296],
					['work', 'G55', -14.8791],
					['tool', '2', 1.0919]
				];
				await trx('offset_versions').insert(
					rows.map(([kind, register, value]) => ({
						machine_id: m.id,
						register_kind: kind,
						register,
						value,
						units: 'inch',
						convention: 'master-tool',
						reference_version: 1
					}))
				);
				const setupId = await setupOn(
					trx,
					Number(m.id),
					[
						{ register: 'G54', obstacle: 3.125 },
						{ register: 'G55', obstacle: 1.875 }
					],
					[Number(t1.id), Number(t2.id)]
				);
				return { machineId: Number(m.id), setupId };
			},
			knex
		);
		const all = await fourWays(machineId, setupId);
		// 3.125 + 1 − h_k: G54 → 1.3125, G55 → 3.0620.
		const expected = { G54: 1.3125, G55: 3.062 };
		expect(all).toEqual({ checks: expected, page: expected, sheet: expected, program: expected });
	});
});
