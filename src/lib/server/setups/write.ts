import type { Knex } from 'knex';
import {
	EDITABLE_STATES,
	SETUP_STATE_LABEL,
	type SetupForm,
	type SetupState
} from '$lib/schemas/setups';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { getMachine } from '../offsets/machine-state';

/** Creating and editing setups. `trx` is always a shop transaction (withShop). */

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
