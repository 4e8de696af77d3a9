/**
 * Putting an assembly from the tool library in a machine pocket (issue 20): its H for that
 * machine's convention comes from the presetter length (the engine's toolOffsetFromPresetter,
 * docs/OFFSETS.md §14) and is recorded as a reading of kind 'presetter' through the same path as
 * a touch-off (readings/record.ts writeReadingAndOffset), so the gate, findings, overrides and
 * the register's history apply to it. The assembly's measurement is the shop's, not the
 * machine's: moving it to another machine uses the same length with that machine's R or master.
 */
import type { Knex } from 'knex';
import {
	formatWithUnits,
	isOffsetInputError,
	toolOffsetFromPresetter,
	toUnits,
	type CutterRegisterMode,
	type Finding,
	type HistoryEntry
} from '$lib/offsets';
import type { AssignForm } from '$lib/schemas/tool-library';
import { audit } from '../audit';
import {
	listReferences,
	machineState,
	type MachineRecord,
	type ReferenceRecord
} from '../offsets/machine-state';
import { ReadingInputError, type ReadingIssue } from '../readings/input';
import { writeReadingAndOffset, type Recorded } from '../readings/record';
import type { BriefFinding, ReadingPreview } from '$lib/reading-preview';
import { activeHNumbers } from '../tools/service';
import type { Actor } from '../actor';
import { getAssembly, type Assembly, type Measurement } from './library';
import { endEarlierAssignments } from './placement';
import { cutterRegisterOf, writeComponentVersion } from '../components/store';

export interface AssignmentPreview {
	preview: ReadingPreview;
	assembly: Assembly;
	measurement: Measurement;
	/** The gauge length in the machine's units (what went into H). */
	gaugeLength: number;
	/** The pocket's tool, or null when the assignment adds one to the rack. */
	tool: { id: number; t: number; h: number; description: string } | null;
	t: number;
	h: number;
	reference: ReferenceRecord | null;
	/**
	 * The pocket's radius register from the measured radius, in the machine's units and the
	 * meaning of its D registers (a diameter machine gets twice the radius); null when the
	 * measurement has no radius.
	 */
	cutter: { mode: CutterRegisterMode; value: number } | null;
}

const brief = (f: Finding): BriefFinding => ({
	kind: f.kind,
	severity: f.severity,
	message: f.message
});

/** The H register's own findings (and its setups'), as the touch-off preview shows them. */
function toolFindings(findings: Finding[], h: string): BriefFinding[] {
	return findings
		.filter((f) => (f.subject.type === 'tool' || f.subject.type === 'setup') && f.subject.h === h)
		.map(brief)
		.sort((a, b) => (a.severity === b.severity ? 0 : a.severity === 'stop' ? -1 : 1));
}

function previousOf(history: HistoryEntry[] | undefined) {
	const e = history && history.length >= 2 ? history[history.length - 2] : undefined;
	return e ? { value: e.value, measuredAt: new Date(e.at).toISOString() } : undefined;
}

/**
 * The master tool's length, for the master-tool convention: from its own presetter reading when
 * its newest reading is one, else from its touch on the reference (machine Z − block) with R.
 */
async function masterOf(
	trx: Knex.Transaction,
	machine: MachineRecord
): Promise<{ masterGaugeLength?: number; masterTouchZ?: number; text: string }> {
	if (!machine.masterToolH) return { text: '' };
	const r = await trx('readings as r')
		.join('tools as t', 't.id', 'r.tool_id')
		.leftJoin('assembly_measurements as m', 'm.id', 'r.presetter_measurement_id')
		.where({ 'r.machine_id': machine.id, 't.h_number': machine.masterToolH })
		.whereIn('r.kind', ['tool-touch', 'tool-remeasure', 'reference', 'presetter'])
		.whereRaw('not exists (select 1 from readings c where c.corrects_reading_id = r.id)')
		.orderBy([
			{ column: 'r.taken_at', order: 'desc' },
			{ column: 'r.id', order: 'desc' }
		])
		.first('r.kind', 'r.machine_z', 'r.block_height', 'm.gauge_length', 'm.units');
	if (!r) return { text: '' };
	const fmt = (v: number) => formatWithUnits(v, machine.units, machine.resolution);
	if (r.kind === 'presetter') {
		const l = toUnits(Number(r.gauge_length), r.units, machine.units);
		return { masterGaugeLength: l, text: `master L ${fmt(l)} (presetter)` };
	}
	const z = Math.round((Number(r.machine_z) - Number(r.block_height)) * 1e6) / 1e6;
	return { masterTouchZ: z, text: `master on the reference ${fmt(z)} − R` };
}

/** What assigning would record; nothing is written. */
export async function previewAssignment(
	trx: Knex.Transaction,
	assemblyId: number,
	machine: MachineRecord,
	form: Pick<AssignForm, 't' | 'h'>,
	now = new Date()
): Promise<AssignmentPreview> {
	const assembly = await getAssembly(trx, assemblyId);
	if (!assembly)
		throw ReadingInputError.of('assembly', 'That assembly is not in this shop’s library.');
	const measurement = assembly.latest;
	if (!measurement)
		throw ReadingInputError.of(
			'assembly',
			`${assembly.name} has no presetter measurement yet: measure it first.`
		);
	const issues: ReadingIssue[] = [];
	const existing = await trx('tools')
		.where({ machine_id: machine.id, t_number: form.t })
		.whereNull('archived_at')
		.first('id', 't_number', 'h_number', 'description');
	let h: number;
	if (existing) {
		h = Number(existing.h_number);
		if (form.h !== undefined && form.h !== h)
			issues.push({
				field: 'h',
				message: `T${form.t} on ${machine.name} uses H${h}, not H${form.h}: leave H blank to keep H${h}, or archive that tool first.`
			});
	} else {
		h = form.h ?? form.t;
		const usedBy = (await activeHNumbers(trx, machine.id)).get(h);
		if (usedBy !== undefined)
			issues.push({
				field: 'h',
				message: `H${h} is already the length offset of T${usedBy} on ${machine.name}; two tools cannot share one H number. Choose another H.`
			});
	}
	if (issues.length) throw new ReadingInputError(issues);

	// The same length, in the machine's units (1 in = 25.4 mm exactly, NIST SP 811).
	const L =
		measurement.units === machine.units
			? measurement.gaugeLength
			: toUnits(measurement.gaugeLength, measurement.units, machine.units);
	const reference = (await listReferences(trx, machine.id))[0] ?? null;
	const R = reference?.gaugeLineZ ?? undefined;
	const master =
		machine.convention === 'master-tool' && machine.masterToolH !== h
			? await masterOf(trx, machine)
			: { masterGaugeLength: L, text: 'itself (the master tool)' };
	let value: number;
	try {
		value = toolOffsetFromPresetter({
			convention: machine.convention,
			units: machine.units,
			gaugeLength: L,
			referenceGaugeLineZ: R,
			masterGaugeLength: master.masterGaugeLength,
			masterTouchZ: master.masterTouchZ,
			resolution: machine.resolution
		});
	} catch (e) {
		if (!isOffsetInputError(e)) throw e;
		throw new ReadingInputError(
			e.issues.map((i) => ({
				field: 'machineId',
				message:
					i.field === 'referenceGaugeLineZ'
						? `${machine.name}'s reference has no gauge-line Z (R) recorded, which turning a presetter length into its H needs (H = R + L): a lead must re-establish the reference with it first.`
						: i.field === 'masterGaugeLength'
							? `${machine.name}'s master tool (H${machine.masterToolH ?? '?'}) has no length yet: touch it off on the reference or put a measured assembly in its pocket first.`
							: `Gauge length ${i.message}.`
			}))
		);
	}
	const register = String(h);
	const state = await machineState(trx, machine, now, {
		kind: 'tool',
		register,
		value,
		// A different assembly in the pocket is a tool change: a new length is expected.
		toolChange: true
	});
	const prev = previousOf(state.checkInput.history?.tools?.[register]);
	const fmt = (v: number) => formatWithUnits(v, machine.units, machine.resolution);
	const lText =
		measurement.units === machine.units
			? `L ${fmt(L)}`
			: `L ${formatWithUnits(measurement.gaugeLength, measurement.units)} = ${fmt(L)}`;
	const working =
		machine.convention === 'gauge-length'
			? `H${register} = ${lText} = ${fmt(value)}`
			: machine.convention === 'reference-touch'
				? `H${register} = R ${fmt(R!)} + ${lText} = ${fmt(value)}`
				: `H${register} = ${lText} − ${master.text} = ${fmt(value)}`;
	return {
		preview: {
			registerKind: 'tool',
			register,
			label: `H${register}`,
			value,
			previous: prev?.value ?? null,
			previousAt: prev?.measuredAt ?? null,
			delta: prev ? Math.round((value - prev.value) * 1e6) / 1e6 : null,
			findings: toolFindings(state.findings, register),
			working,
			toolFindings: [],
			referenceVersion: reference?.version ?? 0
		},
		assembly,
		measurement,
		gaugeLength: L,
		tool: existing
			? {
					id: Number(existing.id),
					t: Number(existing.t_number),
					h: Number(existing.h_number),
					description: existing.description
				}
			: null,
		t: form.t,
		h,
		reference,
		cutter: await cutterOf(trx, machine, measurement)
	};
}

/** The measured radius as the machine's radius/diameter register holds it (1 in = 25.4 mm, NIST SP 811). */
async function cutterOf(
	trx: Knex.Transaction,
	machine: MachineRecord,
	m: Measurement
): Promise<AssignmentPreview['cutter']> {
	if (m.radius === null) return null;
	const mode = await cutterRegisterOf(trx, machine.id);
	const r = m.units === machine.units ? m.radius : toUnits(m.radius, m.units, machine.units);
	const d = mode === 'diameter' ? 2 * r : r;
	// Rounded once to the machine's resolution (docs/OFFSETS.md §3).
	return {
		mode,
		value: Number((Math.round(d / machine.resolution) * machine.resolution).toFixed(6))
	};
}

/**
 * Assigns: adds the tool to the rack when the pocket is empty, records the 'presetter' reading
 * and the H's new version (Stop only with an override and its reason), and the assignment; ends
 * the assembly's earlier assignment and the pocket's earlier assembly (./placement.ts: one
 * assembly, one place). `at`: when it was put in (demo data and imports of past moves);
 * default the database's now.
 */
export async function assignAssembly(
	trx: Knex.Transaction,
	assemblyId: number,
	machine: MachineRecord,
	form: AssignForm,
	actor: Actor,
	at?: Date
): Promise<
	Recorded & { assignmentId: number; toolId: number; plan: AssignmentPreview; ended: number }
> {
	const plan = await previewAssignment(trx, assemblyId, machine, form, at ?? new Date());
	const { assembly, measurement } = plan;
	let toolId = plan.tool?.id;
	if (!toolId) {
		const stickOut =
			assembly.stickOut === null
				? null
				: assembly.units === machine.units
					? assembly.stickOut
					: toUnits(assembly.stickOut, assembly.units, machine.units, 0.0001);
		const description = [assembly.name, assembly.cutter].filter(Boolean).join(' — ').slice(0, 120);
		const [t] = await trx('tools')
			.insert({
				machine_id: machine.id,
				t_number: plan.t,
				h_number: plan.h,
				description,
				holder: assembly.holder.slice(0, 120),
				stickout: stickOut
			})
			.returning('id');
		toolId = Number(t.id);
		await audit(trx, {
			actorUserId: actor.id,
			actorEmail: actor.email,
			ip: actor.ip,
			action: 'tool.added',
			target: `T${plan.t}`,
			detail: { h: plan.h, description, assembly: assembly.name }
		});
	}
	const fmtL = formatWithUnits(measurement.gaugeLength, measurement.units);
	const recorded = await writeReadingAndOffset(
		trx,
		machine,
		actor,
		{
			kind: 'presetter',
			tool_id: toolId,
			machine_z: null,
			block_height: 0,
			instrument:
				`presetter${measurement.presetter ? ` ${measurement.presetter}` : ''}: ${assembly.name} L ${fmtL}`.slice(
					0,
					200
				),
			reference_version: plan.preview.referenceVersion,
			tool_changed: true,
			reason: `Assembly ${assembly.name} from the tool library (measured ${measurement.measuredAt.slice(0, 10)})`,
			presetter_measurement_id: measurement.id,
			...(at ? { taken_at: at } : {})
		},
		plan.preview,
		`${machine.name} T${plan.t} H${plan.h}`,
		{ requested: form.override, reason: form.overrideReason }
	);
	const [a] = await trx('assembly_assignments')
		.insert({
			assembly_id: assembly.id,
			measurement_id: measurement.id,
			machine_id: machine.id,
			tool_id: toolId,
			reading_id: recorded.readingId,
			assigned_by: actor.id,
			...(at ? { assigned_at: at } : {})
		})
		.returning('id');
	// The measured radius goes into the pocket's radius register (its geometry; wear stays).
	if (plan.cutter)
		await writeComponentVersion(trx, machine, actor, {
			kind: 'tool',
			register: String(plan.h),
			component: 'radius',
			value: plan.cutter.value,
			source: 'presetter',
			cutterRegister: plan.cutter.mode,
			presetterMeasurementId: measurement.id,
			reason: `Assembly ${assembly.name} from the tool library`,
			overridden: null,
			at
		});
	const ended = await endEarlierAssignments(
		trx,
		{ assignmentId: Number(a.id), assemblyId: assembly.id, toolId },
		actor.id,
		at
	);
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'assembly.assigned',
		target: `${assembly.name} → ${machine.name} T${plan.t}`,
		detail: {
			assemblyId: assembly.id,
			measurementId: measurement.id,
			machineId: machine.id,
			h: plan.h,
			value: plan.preview.value,
			units: machine.units,
			readingId: recorded.readingId,
			endedEarlier: ended
		}
	});
	return { ...recorded, assignmentId: Number(a.id), toolId, plan, ended };
}
