/**
 * Re-establishing a machine's reference: a new version of the surface (never an edit of the old
 * one), optionally with a check touch of one tool on it. Every offset measured before it that
 * depends on the reference becomes `stale-reference` — machineState derives that from the new
 * version's established_at, so nothing else is written.
 */
import type { Knex } from 'knex';
import { checkOffsets, formatWithUnits, offsetDelta, tipZ } from '$lib/offsets';
import type { ReferenceReadingForm } from '$lib/schemas/readings';
import { audit } from '../audit';
import { recheckMachine } from '../fleet/recheck';
import { listReferences, machineState, type MachineRecord } from '../offsets/machine-state';
import type { Actor } from '../actor';
import { parseLength, ReadingInputError, type ReadingIssue } from './input';
import { findTool } from './lookups';

export interface ReferencePreview {
	version: number;
	/** Registers that become stale-reference, with their current values. */
	becomeStale: { kind: 'tool' | 'work'; register: string; label: string; value: number }[];
	/** Registers that do not depend on the reference in this convention (stay as they are). */
	unaffected: string[];
	/** When a check touch was given and the same tool has an earlier touch on the reference. */
	shift: { tool: string; now: number; before: number; beforeAt: string; delta: number } | null;
	sentence: string;
}

/** Work out what re-establishing would do, without writing. */
export async function previewReference(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: ReferenceReadingForm,
	now = new Date()
) {
	const issues: ReadingIssue[] = [];
	const height = parseLength(machine, 'height', 'Height', form.height, issues, {
		required: true,
		nonNegative: true
	});
	const gaugeLineZ = parseLength(machine, 'gaugeLineZ', 'Gauge-line Z', form.gaugeLineZ, issues);
	if (gaugeLineZ !== undefined && (gaugeLineZ >= 0 || gaugeLineZ < -machine.zTravel)) {
		issues.push({
			field: 'gaugeLineZ',
			message: `Gauge-line Z must lie below Z home and within ${machine.name}'s travel (0 to -${machine.zTravel}).`
		});
	}
	if (machine.convention === 'gauge-length' && gaugeLineZ === undefined) {
		issues.push({
			field: 'gaugeLineZ',
			message: `${machine.name} measures tools from the gauge line, so its reference needs the gauge-line Z.`
		});
	}
	if (!form.note) {
		issues.push({ field: 'note', message: 'Say why the reference is being re-established.' });
	}
	const tool = form.checkToolId ? await findTool(trx, machine.id, form.checkToolId) : undefined;
	if (form.checkToolId && !tool) {
		issues.push({
			field: 'checkToolId',
			message: `Tool #${form.checkToolId} is not a tool of ${machine.name}.`
		});
	}
	const machineZ = parseLength(machine, 'machineZ', 'Machine Z', form.machineZ, issues);
	const block =
		parseLength(machine, 'blockHeight', 'Block height', form.blockHeight, issues, {
			nonNegative: true
		}) ?? 0;
	if (machineZ !== undefined && !tool && !issues.some((i) => i.field === 'checkToolId')) {
		issues.push({ field: 'checkToolId', message: 'Choose the tool that touched the reference.' });
	}
	if (tool && machineZ === undefined && !issues.some((i) => i.field === 'machineZ')) {
		issues.push({
			field: 'machineZ',
			message: `Type the machine Z T${tool.t} read on the reference.`
		});
	}
	if (machineZ !== undefined && (machineZ > 0 || machineZ < -machine.zTravel)) {
		issues.push({
			field: 'machineZ',
			message: `Machine Z is outside the Z travel of ${machine.name} (0 to -${machine.zTravel}).`
		});
	}
	if (issues.length) throw new ReadingInputError(issues);

	const refs = await listReferences(trx, machine.id);
	const state = await machineState(trx, machine, now);
	// The engine's own rule: what would be stale if the reference were re-established now.
	const after = checkOffsets({ ...state.checkInput, referenceEstablishedAt: now.toISOString() });
	const stale = new Set(
		after
			.filter((f) => f.kind === 'stale-reference')
			.map((f) =>
				f.subject.type === 'tool'
					? `tool:${f.subject.h}`
					: `work:${f.subject.type === 'fixture' ? f.subject.register : ''}`
			)
	);
	const becomeStale = state.offsets
		.filter((o) => stale.has(`${o.kind}:${o.register}`))
		.map((o) => ({
			kind: o.kind,
			register: o.register,
			label: o.kind === 'tool' ? `H${o.register}` : o.register,
			value: o.value
		}));
	const unaffected = state.offsets
		.filter((o) => !stale.has(`${o.kind}:${o.register}`))
		.map((o) => (o.kind === 'tool' ? `H${o.register}` : o.register));

	let shift: ReferencePreview['shift'] = null;
	if (tool && machineZ !== undefined) {
		const last = await trx('readings')
			.where({ machine_id: machine.id, tool_id: tool.id })
			.whereIn('kind', ['tool-touch', 'tool-remeasure', 'reference'])
			.whereRaw('not exists (select 1 from readings c where c.corrects_reading_id = readings.id)')
			.orderBy([
				{ column: 'taken_at', order: 'desc' },
				{ column: 'id', order: 'desc' }
			])
			.first();
		if (last) {
			const before = tipZ(Number(last.machine_z), Number(last.block_height));
			const nowTip = tipZ(machineZ, block);
			shift = {
				tool: `T${tool.t}`,
				now: nowTip,
				before,
				beforeAt: new Date(last.taken_at).toISOString(),
				delta: offsetDelta(nowTip, before)
			};
		}
	}
	const fmt = (v: number) => formatWithUnits(v, machine.units, machine.resolution);
	const sentence =
		(becomeStale.length
			? `${becomeStale.length} offset(s) measured before now will be marked stale until they are re-measured against the new reference.`
			: 'No recorded offset depends on the reference in this convention, so none becomes stale.') +
		(shift
			? ` ${shift.tool} tip on the reference reads ${fmt(shift.now)} now against ${fmt(shift.before)} at its last touch: the reference moved ${fmt(shift.delta)}.`
			: '');
	const preview: ReferencePreview = {
		version: (refs[0]?.version ?? 0) + 1,
		becomeStale,
		unaffected,
		shift,
		sentence
	};
	return { preview, parsed: { height: height!, gaugeLineZ, tool, machineZ, block } };
}

/** Adds the new reference version (and the check touch as a reading), and audits it. */
export async function recordReference(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: ReferenceReadingForm,
	actor: Actor,
	now = new Date()
): Promise<{
	referenceId: number;
	version: number;
	readingId: number | null;
	preview: ReferencePreview;
}> {
	const { preview, parsed } = await previewReference(trx, machine, form, now);
	const [ref] = await trx('reference_surfaces')
		.insert({
			machine_id: machine.id,
			version: preview.version,
			instrument: form.instrument,
			height: parsed.height,
			location: form.location,
			gauge_line_z: parsed.gaugeLineZ ?? null,
			established_by: actor.id,
			note: form.note
		})
		.returning('id');
	let readingId: number | null = null;
	if (parsed.tool && parsed.machineZ !== undefined) {
		const [r] = await trx('readings')
			.insert({
				machine_id: machine.id,
				kind: 'reference',
				tool_id: parsed.tool.id,
				machine_z: parsed.machineZ,
				block_height: parsed.block,
				instrument: `${form.instrument} (new reference v${preview.version})`,
				reference_version: preview.version,
				reason: form.note,
				taken_by: actor.id
			})
			.returning('id');
		readingId = Number(r.id);
	}
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'reference.reestablished',
		target: `${machine.name} reference v${preview.version}`,
		detail: {
			machineId: machine.id,
			version: preview.version,
			note: form.note,
			stale: preview.becomeStale.map((s) => s.label),
			...(preview.shift ? { shift: preview.shift.delta } : {}),
			...(readingId ? { readingId } : {})
		}
	});
	// Findings follow the data: what the new reference makes stale shows at once.
	await recheckMachine(trx, machine, {
		what: `re-establishing the reference (v${preview.version})`,
		by: actor.id
	});
	return { referenceId: Number(ref.id), version: preview.version, readingId, preview };
}
