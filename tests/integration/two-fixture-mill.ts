import type { Knex } from 'knex';

/**
 * A test machine shaped like the demo's Mill 1 (values invented for tests): inch, 20 in Z
 * travel, reference-touch, a 1-2-3 block reference, G54 at 2.8125 in and G55 at 1.0630 in above
 * the reference (W_k = h_k in this convention), H1 -15.8421 in and H2 -14.7502 in (H_i = R + L_i).
 * `extraFixtures` adds registers with no offset recorded. `trx` must be a shop transaction.
 */
export async function insertTwoFixtureMill(
	trx: Knex.Transaction,
	extraFixtures: { register: string; name: string }[] = []
): Promise<{ id: number; fixtures: Record<string, number>; t1: number; t2: number }> {
	const [m] = await trx('machines')
		.insert({
			name: 'Test Mill',
			units: 'inch',
			z_travel: 20,
			resolution: 0.0001,
			control_style: 'iso',
			convention: 'reference-touch'
		})
		.returning('id');
	await trx('reference_surfaces').insert({
		machine_id: m.id,
		version: 1,
		instrument: '1-2-3 block',
		height: 3
	});
	const fixtureRows = [
		{ register: 'G54', name: 'Op A vise' },
		{ register: 'G55', name: 'Op B plate' },
		...extraFixtures
	];
	const fx = await trx('fixtures')
		.insert(fixtureRows.map((f) => ({ machine_id: m.id, ...f })))
		.returning(['id', 'register']);
	const tools = await trx('tools')
		.insert([
			{ machine_id: m.id, t_number: 1, h_number: 1, description: 'Face mill' },
			{ machine_id: m.id, t_number: 2, h_number: 2, description: 'End mill' }
		])
		.returning('id');
	const offsets: [string, string, number][] = [
		['work', 'G54', 2.8125],
		['work', 'G55', 1.063],
		['tool', '1', -15.8421],
		['tool', '2', -14.7502]
	];
	await trx('offset_versions').insert(
		offsets.map(([kind, register, value]) => ({
			machine_id: m.id,
			register_kind: kind,
			register,
			value,
			units: 'inch',
			convention: 'reference-touch',
			reference_version: 1
		}))
	);
	return {
		id: Number(m.id),
		fixtures: Object.fromEntries(fx.map((f) => [f.register, Number(f.id)])),
		t1: Number(tools[0].id),
		t2: Number(tools[1].id)
	};
}
