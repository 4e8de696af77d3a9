import type { Knex } from 'knex';

/**
 * The setup on the table for machine mode: the newest setup marked on the machine, with the
 * ids of its fixtures and tools (the page shows those first), or null when none is.
 */
export async function activeSetup(
	trx: Knex.Transaction,
	machineId: number
): Promise<{
	id: number;
	name: string;
	job: string;
	fixtureIds: number[];
	toolIds: number[];
} | null> {
	const s = await trx('setups')
		.where({ machine_id: machineId, status: 'on-machine' })
		.orderBy([
			{ column: 'created_at', order: 'desc' },
			{ column: 'id', order: 'desc' }
		])
		.first('id', 'name', 'job');
	if (!s) return null;
	const fixtures = await trx('setup_fixtures').where({ setup_id: s.id }).select('fixture_id');
	const tools = await trx('setup_tools').where({ setup_id: s.id }).select('tool_id');
	return {
		id: Number(s.id),
		name: s.name,
		job: s.job ?? '',
		fixtureIds: fixtures.map((f) => Number(f.fixture_id)),
		toolIds: tools.map((t) => Number(t.tool_id))
	};
}
