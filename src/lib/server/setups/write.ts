import type { Knex } from 'knex';
import {
	EDITABLE_STATES,
	NEXT_STATE,
	SETUP_STATE_LABEL,
	type SetupForm,
	type SetupState
} from '$lib/schemas/setups';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { latestSignoff } from './signoff';
import { getMachine } from '../offsets/machine-state';

/** `trx` is always a shop transaction (withShop). */

/** A refusal tied to a form field (superforms path, e.g. `fixtures[1].fixtureId`). */
export interface FieldIssue {
	field: string;
	message: string;
}

export type WriteResult<T> = { ok: true; value: T } | { ok: false; issues: FieldIssue[] };

/**
 * Checks what zod cannot: the machine exists, every fixture and tool is that machine's (and
 * not archived), no fixture or tool twice, every op's fixture is one of the setup's fixtures.
 */
async function checkReferences(
	trx: Knex.Transaction,
	input: SetupForm
): Promise<{ issues: FieldIssue[]; machineName: string }> {
	const issues: FieldIssue[] = [];
	const machine = await getMachine(trx, input.machineId);
	if (!machine) {
		return {
			issues: [{ field: 'machineId', message: 'Machine: no such machine in this shop.' }],
			machineName: ''
		};
	}
	const fixtures = await trx('fixtures')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.select('id', 'register');
	const fixtureIds = new Map(fixtures.map((f) => [Number(f.id), f.register as string]));
	const tools = await trx('tools')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.select('id', 't_number');
	const toolIds = new Set(tools.map((t) => Number(t.id)));

	const seenFx = new Set<number>();
	input.fixtures.forEach((f, i) => {
		if (!fixtureIds.has(f.fixtureId)) {
			issues.push({
				field: `fixtures[${i}].fixtureId`,
				message: `Fixture ${f.fixtureId} is not a fixture of ${machine.name}: choose one of its work offsets.`
			});
		} else if (seenFx.has(f.fixtureId)) {
			issues.push({
				field: `fixtures[${i}].fixtureId`,
				message: `${fixtureIds.get(f.fixtureId)} is listed twice: each fixture once.`
			});
		}
		seenFx.add(f.fixtureId);
		if (f.obstacleHeight > machine.zTravel) {
			issues.push({
				field: `fixtures[${i}].obstacleHeight`,
				message: `Obstacle height ${f.obstacleHeight} ${machine.units} is more than the machine's whole Z travel (${machine.zTravel} ${machine.units}): check the units.`
			});
		}
	});
	const seenTools = new Set<number>();
	input.toolIds.forEach((id, i) => {
		if (!toolIds.has(id)) {
			issues.push({
				field: `toolIds[${i}]`,
				message: `Tool ${id} is not a tool of ${machine.name}: choose one of its tools.`
			});
		} else if (seenTools.has(id)) {
			issues.push({ field: `toolIds[${i}]`, message: 'This tool is listed twice.' });
		}
		seenTools.add(id);
	});
	input.ops.forEach((op, i) => {
		if (op.fixtureId && !seenFx.has(op.fixtureId)) {
			issues.push({
				field: `ops[${i}].fixtureId`,
				message: `Op "${op.name}": its fixture must be one of this setup's fixtures on ${machine.name}.`
			});
		}
	});
	if (input.clearanceMargin > machine.zTravel) {
		issues.push({
			field: 'clearanceMargin',
			message: `Clearance margin ${input.clearanceMargin} ${machine.units} is more than the machine's Z travel: check the units.`
		});
	}
	return { issues, machineName: machine.name };
}

async function writeChildren(trx: Knex.Transaction, setupId: number, input: SetupForm) {
	await trx('setup_ops').where({ setup_id: setupId }).delete();
	await trx('setup_tools').where({ setup_id: setupId }).delete();
	await trx('setup_fixtures').where({ setup_id: setupId }).delete();
	await trx('setup_fixtures').insert(
		input.fixtures.map((f) => ({
			setup_id: setupId,
			fixture_id: f.fixtureId,
			obstacle_height: f.obstacleHeight
		}))
	);
	if (input.toolIds.length > 0)
		await trx('setup_tools').insert(input.toolIds.map((t) => ({ setup_id: setupId, tool_id: t })));
	if (input.ops.length > 0)
		await trx('setup_ops').insert(
			input.ops.map((op, i) => ({
				setup_id: setupId,
				sequence: i + 1,
				name: op.name,
				fixture_id: op.fixtureId || null,
				notes: op.notes
			}))
		);
}

/** Creates a planned setup. Nothing is written when any reference is wrong. */
export async function createSetup(
	trx: Knex.Transaction,
	input: SetupForm,
	actor: Actor,
	note = 'created'
): Promise<WriteResult<number>> {
	const { issues, machineName } = await checkReferences(trx, input);
	if (issues.length > 0) return { ok: false, issues };
	const [row] = await trx('setups')
		.insert({
			machine_id: input.machineId,
			name: input.name,
			job: input.job,
			status: 'planned',
			clearance_margin: input.clearanceMargin,
			created_by: actor.id
		})
		.returning('id');
	const id = Number(row.id);
	await writeChildren(trx, id, input);
	await trx('setup_status_changes').insert({
		setup_id: id,
		from_status: null,
		to_status: 'planned',
		changed_by: actor.id,
		note
	});
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'setup.create',
		target: `setup ${id}`,
		detail: { name: input.name, machine: machineName, note }
	});
	return { ok: true, value: id };
}

/** Edits a setup that is still planned or on the machine (proven and closed ones are copied). */
export async function updateSetup(
	trx: Knex.Transaction,
	setupId: number,
	input: SetupForm,
	actor: Actor
): Promise<WriteResult<number>> {
	const current = await trx('setups').where({ id: setupId }).forUpdate().first();
	if (!current) return { ok: false, issues: [{ field: 'name', message: 'No such setup.' }] };
	if (!EDITABLE_STATES.includes(current.status)) {
		return {
			ok: false,
			issues: [
				{
					field: 'name',
					message: `This setup is ${SETUP_STATE_LABEL[current.status as SetupState].toLowerCase()}: it can no longer be changed. Copy it to make a new one.`
				}
			]
		};
	}
	if (Number(current.machine_id) !== input.machineId && current.status !== 'planned') {
		return {
			ok: false,
			issues: [
				{
					field: 'machineId',
					message: 'Machine: a setup that is on the machine cannot move to another one.'
				}
			]
		};
	}
	const { issues, machineName } = await checkReferences(trx, input);
	if (issues.length > 0) return { ok: false, issues };
	await trx('setups').where({ id: setupId }).update({
		machine_id: input.machineId,
		name: input.name,
		job: input.job,
		clearance_margin: input.clearanceMargin
	});
	await writeChildren(trx, setupId, input);
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'setup.update',
		target: `setup ${setupId}`,
		detail: { name: input.name, machine: machineName }
	});
	return { ok: true, value: setupId };
}

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

/**
 * Moves a setup one step forward (planned → on-machine → proven → closed), or closes it from
 * any open state (a plan dropped). Recorded with who and when, in the status history and the
 * shop's audit log.
 */
export async function changeSetupStatus(
	trx: Knex.Transaction,
	setupId: number,
	to: SetupState,
	actor: Actor,
	note = ''
): Promise<WriteResult<SetupState>> {
	const current = await trx('setups').where({ id: setupId }).forUpdate().first();
	if (!current) return { ok: false, issues: [{ field: 'to', message: 'No such setup.' }] };
	const from = current.status as SetupState;
	const allowed = NEXT_STATE[from] === to || (to === 'closed' && from !== 'closed');
	if (!allowed) {
		const next = NEXT_STATE[from];
		return {
			ok: false,
			issues: [
				{
					field: 'to',
					message: `A setup that is ${SETUP_STATE_LABEL[from].toLowerCase()} cannot become ${SETUP_STATE_LABEL[to].toLowerCase()}${next ? `: next is ${SETUP_STATE_LABEL[next].toLowerCase()}` : ': it is closed; copy it to run the job again'}.`
				}
			]
		};
	}
	// Proven means someone entered, verified at the control and checked the first part: signed off.
	if (to === 'proven' && !(await latestSignoff(trx, setupId))) {
		return {
			ok: false,
			issues: [
				{
					field: 'to',
					message:
						'A setup becomes proven only with its sign-off: record who entered the offsets, who verified them at the control and who checked the first part.'
				}
			]
		};
	}
	await trx('setups').where({ id: setupId }).update({ status: to });
	await trx('setup_status_changes').insert({
		setup_id: setupId,
		from_status: from,
		to_status: to,
		changed_by: actor.id,
		note
	});
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'setup.status',
		target: `setup ${setupId}`,
		detail: { name: current.name, from, to, note }
	});
	return { ok: true, value: to };
}
