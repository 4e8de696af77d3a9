import type { Knex } from 'knex';
import type { SetupForm } from '$lib/schemas/setups';
import type { Actor } from '../actor';
import { createSetup, type WriteResult } from './write';

/** Reading a setup back into the form's shape, and copying it. `trx` is a shop transaction. */

/** What a setup holds, in the form's shape (for editing and copying). */
export async function setupAsForm(
	trx: Knex.Transaction,
	setupId: number
): Promise<SetupForm | undefined> {
	const s = await trx('setups').where({ id: setupId }).first();
	if (!s) return undefined;
	const fixtures = await trx('setup_fixtures')
		.where({ setup_id: setupId })
		.orderBy('id')
		.select('fixture_id', 'obstacle_height');
	const tools = await trx('setup_tools').where({ setup_id: setupId }).orderBy('id');
	const ops = await trx('setup_ops').where({ setup_id: setupId }).orderBy('sequence');
	return {
		machineId: Number(s.machine_id),
		name: s.name,
		job: s.job,
		clearanceMargin: Number(s.clearance_margin),
		fixtures: fixtures.map((f) => ({
			fixtureId: Number(f.fixture_id),
			obstacleHeight: Number(f.obstacle_height)
		})),
		toolIds: tools.map((t) => Number(t.tool_id)),
		ops: ops.map((o) => ({
			name: o.name,
			fixtureId: o.fixture_id === null ? 0 : Number(o.fixture_id),
			notes: o.notes
		}))
	};
}

/**
 * A new planned setup with the same machine, fixtures, heights, tools and ops (not photos or
 * history). Fixtures or tools archived since are left out and named in `dropped`.
 */
export async function copySetup(
	trx: Knex.Transaction,
	setupId: number,
	name: string,
	actor: Actor
): Promise<WriteResult<{ id: number; dropped: string[] }>> {
	const form = await setupAsForm(trx, setupId);
	if (!form) return { ok: false, issues: [{ field: 'name', message: 'No such setup.' }] };
	const liveFx = new Set(
		(
			await trx('fixtures')
				.where({ machine_id: form.machineId })
				.whereNull('archived_at')
				.select('id')
		).map((r) => Number(r.id))
	);
	const liveTools = new Set(
		(
			await trx('tools').where({ machine_id: form.machineId }).whereNull('archived_at').select('id')
		).map((r) => Number(r.id))
	);
	const dropped: string[] = [];
	const fixtures = form.fixtures.filter((f) => liveFx.has(f.fixtureId));
	const toolIds = form.toolIds.filter((t) => liveTools.has(t));
	for (const f of form.fixtures)
		if (!liveFx.has(f.fixtureId)) dropped.push(`fixture ${f.fixtureId}`);
	for (const t of form.toolIds) if (!liveTools.has(t)) dropped.push(`tool ${t}`);
	const ops = form.ops.map((o) => ({ ...o, fixtureId: liveFx.has(o.fixtureId) ? o.fixtureId : 0 }));
	if (fixtures.length === 0) {
		return {
			ok: false,
			issues: [
				{
					field: 'name',
					message: 'Every fixture of that setup has been archived: nothing to copy onto.'
				}
			]
		};
	}
	const created = await createSetup(
		trx,
		{ ...form, name, fixtures, toolIds, ops },
		actor,
		`copied from setup ${setupId}`
	);
	return created.ok ? { ok: true, value: { id: created.value, dropped } } : created;
}
