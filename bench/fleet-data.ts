/**
 * The fleet board's scale shop (issue 7): `machines` machines with 20 tools each, a reference
 * per machine (every fifth re-set two days ago), a fixture and a setup each, `readings`
 * touch-offs spread over the tools with one offset version per reading, and a stale-age
 * finding on every seventh machine. Seeded in bulk (INSERT … SELECT generate_series), so
 * 200 machines, 4,000 tools and 50,000 readings take seconds. Shared by
 * tests/integration/fleet-scale.test.ts (query count) and bench/fleet.ts (latency).
 */
import type { Knex } from 'knex';
import { withShop, type ShopRef } from '$lib/server/db/tenant';

export const SCALE = { machines: 200, readings: 50_000 } as const;

/** Seeds `machines` machines with 20 tools each and `readings` touch-offs spread over them. */
export async function seedScaleShop(
	knex: Knex,
	shop: ShopRef,
	machines: number,
	readings: number,
	/** ANALYZE afterwards (the whole database: the scale bench with 1,000 shops skips it). */
	analyze = true
): Promise<void> {
	await withShop(
		shop,
		async (trx) => {
			await trx.raw(
				`insert into machines (name, units, z_travel, resolution)
				select 'Mill ' || lpad(i::text, 3, '0'), 'inch', 20, 0.0001 from generate_series(1, ?) i`,
				[machines]
			);
			await trx.raw(`insert into reference_surfaces (machine_id, version, instrument, height, established_at)
				select id, 1, '1-2-3 block', 3, now() - interval '90 days' from machines`);
			// Every fifth machine had its reference re-set two days ago.
			await trx.raw(`insert into reference_surfaces (machine_id, version, instrument, height, established_at)
				select id, 2, '1-2-3 block', 3, now() - interval '2 days' from machines where id % 5 = 0`);
			await trx.raw(`insert into tools (machine_id, t_number, h_number, description)
				select m.id, t, t, 'tool ' || t from machines m, generate_series(1, 20) t`);
			await trx.raw(`insert into fixtures (machine_id, register, name)
				select id, 'G54', 'Vise' from machines`);
			await trx.raw(`insert into setups (machine_id, name, status, clearance_margin)
				select id, 'Job ' || id, case when id % 3 = 0 then 'planned' else 'on-machine' end, 1
				from machines`);
			await trx.raw(
				`insert into readings (machine_id, kind, tool_id, machine_z, reference_version, taken_at)
				select t.machine_id, 'tool-touch', t.id, -14 - (n % 97) / 10000.0, 1,
					now() - make_interval(days => (n % 60), mins => n % 1440)
				from generate_series(1, ?) n
				join lateral (select id, machine_id from tools where id = 1 + (n % (select count(*) from tools))) t on true`,
				[readings]
			);
			await trx.raw(`insert into offset_versions (machine_id, register_kind, register, value, units,
					convention, reading_id, reference_version, created_at)
				select r.machine_id, 'tool', t.h_number::text, r.machine_z - 3, 'inch', 'reference-touch',
					r.id, 1, r.taken_at
				from readings r join tools t on t.id = r.tool_id`);
			await trx.raw(`insert into findings (key, machine_id, kind, severity, subject_type, subject, message)
				select 'm' || id || '|stale-age|tool:H1', id, 'stale-age', 'caution', 'tool', 'H1', 'old'
				from machines where id % 7 = 0`);
			if (analyze) await trx.raw('analyze');
		},
		knex
	);
}
