/**
 * Recording a reading: the Reading row and its new offset version, written together in the
 * caller's shop transaction (withShop commits them, or neither), audited, with the machine's
 * checks run again. Stop values are saved only through the override gate (./override).
 */
import type { Knex } from 'knex';
import type { ReadingPreview } from '$lib/reading-preview';
import type { PartTopReadingForm, ToolReadingForm } from '$lib/schemas/readings';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { recheckMachine, resolveOverride } from '../fleet/recheck';
import type { MachineRecord } from '../offsets/machine-state';
import { instrumentText } from './input';
import { recordOverride, requireOverride, type OverrideChoice } from './override';
import {
	previewPartTopReading,
	previewToolReading,
	type PartTopParsed,
	type ToolParsed
} from './preview';

/** What was written. */
export interface Recorded {
	readingId: number;
	offsetVersionId: number;
	preview: ReadingPreview;
}

/** Writes the reading and its offset version from a computed preview, behind the override gate. */
export async function writeReadingAndOffset(
	trx: Knex.Transaction,
	machine: MachineRecord,
	actor: Actor,
	reading: Record<string, unknown>,
	preview: ReadingPreview,
	auditTarget: string,
	override: OverrideChoice
): Promise<Recorded> {
	const overridden = requireOverride(machine, preview, override);
	const [r] = await trx('readings')
		.insert({
			machine_id: machine.id,
			taken_by: actor.id,
			...reading,
			...(overridden
				? {
						override_reason: override.reason.trim(),
						overridden_findings: [...new Set(overridden.map((f) => f.kind))]
					}
				: {})
		})
		.returning(['id', 'taken_at']);
	const [o] = await trx('offset_versions')
		.insert({
			machine_id: machine.id,
			register_kind: preview.registerKind,
			register: preview.register,
			value: preview.value,
			units: machine.units,
			convention: machine.convention,
			reading_id: r.id,
			reference_version: preview.referenceVersion,
			created_by: actor.id,
			// The reading's own time (the same now() unless a caller recorded a past reading).
			created_at: r.taken_at
		})
		.returning('id');
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: reading.corrects_reading_id ? 'reading.corrected' : 'reading.recorded',
		target: auditTarget,
		detail: {
			machineId: machine.id,
			readingId: Number(r.id),
			offsetVersionId: Number(o.id),
			kind: reading.kind,
			register: preview.label,
			value: preview.value,
			previous: preview.previous,
			units: machine.units,
			findings: preview.findings.map((f) => f.kind),
			...(reading.corrects_reading_id ? { corrects: reading.corrects_reading_id } : {}),
			...(reading.reason ? { reason: reading.reason } : {})
		}
	});
	const subjectKey =
		preview.registerKind === 'tool' ? `tool:H${preview.register}` : `fixture:${preview.register}`;
	const what = `the new reading of ${preview.label}`;
	if (overridden) {
		await recordOverride(trx, machine, actor, preview, overridden, override.reason.trim(), {
			readingId: Number(r.id),
			subjectKey,
			auditTarget
		});
	} else {
		await resolveOverride(trx, machine.id, subjectKey, {
			what: `${what} (reading #${r.id})`,
			by: actor.id
		});
	}
	// Findings follow the data: this machine's checks again, in this transaction.
	await recheckMachine(trx, machine, { what, by: actor.id }, new Date(r.taken_at));
	return { readingId: Number(r.id), offsetVersionId: Number(o.id), preview };
}

/** A tool reading's row (without who took it) and its audit target. */
export function toolReading(
	machine: MachineRecord,
	parsed: ToolParsed,
	form: Pick<ToolReadingForm, 'touchedThrough' | 'toolChanged' | 'reason'>
) {
	return {
		row: {
			kind: form.toolChanged ? 'tool-remeasure' : 'tool-touch',
			tool_id: parsed.tool.id,
			machine_z: parsed.machineZ,
			block_height: parsed.block,
			instrument: instrumentText(form.touchedThrough, parsed.block, machine),
			reference_version: parsed.reference.version,
			corrects_reading_id: parsed.corrects,
			tool_changed: form.toolChanged,
			reason: form.reason
		},
		target: `${machine.name} T${parsed.tool.t} H${parsed.tool.h}`
	};
}

/** A part-top reading's row (without who took it) and its audit target. */
export function partTopReading(
	machine: MachineRecord,
	parsed: PartTopParsed,
	form: Pick<PartTopReadingForm, 'touchedThrough' | 'fixtureChanged' | 'reason'>
) {
	return {
		row: {
			kind: 'part-top',
			tool_id: parsed.tool.id,
			fixture_id: parsed.fixture.id,
			machine_z: parsed.machineZ,
			block_height: parsed.block,
			instrument: `T${parsed.tool.t}, ${instrumentText(form.touchedThrough, parsed.block, machine)}`,
			reference_version: parsed.reference.version,
			corrects_reading_id: parsed.corrects,
			tool_changed: form.fixtureChanged,
			reason: form.reason
		},
		target: `${machine.name} ${parsed.fixture.register}`
	};
}

/** Records a tool reading and its offset version (in the caller's transaction) and audits it. */
export async function recordToolReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	toolId: number | string,
	form: ToolReadingForm,
	actor: Actor,
	now = new Date()
): Promise<Recorded> {
	const { preview, parsed } = await previewToolReading(trx, machine, toolId, form, now);
	const { row, target } = toolReading(machine, parsed, form);
	return writeReadingAndOffset(trx, machine, actor, row, preview, target, {
		requested: form.override,
		reason: form.overrideReason
	});
}

/** Records a part-top reading and the fixture's new work offset version, and audits it. */
export async function recordPartTopReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	fixtureId: number | string,
	form: PartTopReadingForm,
	actor: Actor,
	now = new Date()
): Promise<Recorded> {
	const { preview, parsed } = await previewPartTopReading(trx, machine, fixtureId, form, now);
	const { row, target } = partTopReading(machine, parsed, form);
	return writeReadingAndOffset(trx, machine, actor, row, preview, target, {
		requested: form.override,
		reason: form.overrideReason
	});
}
