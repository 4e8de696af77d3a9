/**
 * A tool's other registers (issue 20): radius (or diameter, per machine setting) geometry and
 * the length and radius wear, set by a lead or from a measured part. Wear beyond the shop's
 * limit is a Stop refused without the override; the control uses geometry + wear.
 */
import type { Knex } from 'knex';
import {
	canonicalH,
	checkWearValue,
	effectiveValue,
	isOffsetInputError,
	proposeWear,
	type CutterRegisterMode,
	wearLimitIn,
	type WearProposal
} from '$lib/offsets';
import { shopWearLimitMm } from '../shops/settings';
import type { PartMeasurementForm, ToolRegisterForm } from '$lib/schemas/components';
import type { MachineRecord } from '../offsets/machine-state';
import { parseLength, ReadingInputError, type ReadingIssue } from '../readings/input';
import type { Actor } from '$lib/server/actor';
import type { BriefFinding } from '$lib/reading-preview';
import {
	componentLabel,
	currentComponent,
	currentComponents,
	cutterRegisterOf,
	gateComponent,
	writeComponentVersion
} from './store';

/**
 * The shop's wear limit in the machine's units: the shop setting (kept in mm), else our default
 * 0.0100 in / 0.25 mm (shop policy). `trx` is a shop transaction: the shop is found by the
 * schema it is scoped to, as `shopPolicy` does.
 */
export async function wearLimitFor(trx: Knex.Transaction, machine: MachineRecord): Promise<number> {
	return wearLimitIn(machine.units, await shopWearLimitMm(trx));
}

/** One tool's registers with the effective values the control uses. */
export interface ToolRegisters {
	h: string;
	t: number;
	description: string;
	lengthGeometry: number | null;
	lengthWear: number;
	lengthEffective: number | null;
	radiusGeometry: number | null;
	radiusWear: number;
	radiusEffective: number | null;
	/** Wear values beyond the limit (Stop). */
	findings: BriefFinding[];
}

/** Every tool of the machine with its length (the Z version) and radius registers. */
export async function toolRegisters(
	trx: Knex.Transaction,
	machine: MachineRecord
): Promise<{ cutterRegister: CutterRegisterMode; wearLimit: number; tools: ToolRegisters[] }> {
	const [tools, lengths, comps, cutterRegister] = await Promise.all([
		trx('tools')
			.where({ machine_id: machine.id })
			.whereNull('archived_at')
			.orderBy('t_number')
			.select('t_number', 'h_number', 'description'),
		trx('current_offsets')
			.where({ machine_id: machine.id, register_kind: 'tool' })
			.select('register', 'value'),
		currentComponents(trx, machine.id),
		cutterRegisterOf(trx, machine.id)
	]);
	const length = new Map(lengths.map((r) => [String(r.register), Number(r.value)]));
	const comp = (h: string, c: string) =>
		comps.find((x) => x.kind === 'tool' && x.register === h && x.component === c)?.value ?? null;
	const limit = await wearLimitFor(trx, machine);
	const out = tools.map((t) => {
		const h = String(t.h_number);
		const lg = length.get(h) ?? null;
		const lw = comp(h, 'length-wear') ?? 0;
		const rg = comp(h, 'radius');
		const rw = comp(h, 'radius-wear') ?? 0;
		const eff = (g: number | null, w: number) =>
			g === null ? null : effectiveValue(g, w, machine.units, machine.resolution);
		const findings = [
			...checkWearValue({ units: machine.units, h, component: 'length-wear', value: lw, limit }),
			...checkWearValue({ units: machine.units, h, component: 'radius-wear', value: rw, limit })
		].map((f) => ({ kind: f.kind, severity: f.severity, message: f.message }));
		return {
			h,
			t: Number(t.t_number),
			description: String(t.description),
			lengthGeometry: lg,
			lengthWear: lw,
			lengthEffective: eff(lg, lw),
			radiusGeometry: rg,
			radiusWear: rw,
			radiusEffective: eff(rg, rw),
			findings
		};
	});
	return { cutterRegister, wearLimit: limit, tools: out };
}

async function requireTool(trx: Knex.Transaction, machine: MachineRecord, raw: string) {
	const h = canonicalH(raw);
	const row =
		h === null
			? undefined
			: await trx('tools')
					.where({ machine_id: machine.id, h_number: Number(h) })
					.whereNull('archived_at')
					.first('id');
	if (!row || h === null)
		throw ReadingInputError.of(
			'h',
			`H${raw} is not a tool on ${machine.name}: add the tool first.`
		);
	return h;
}

/** Sets one register by hand; a wear beyond the limit needs "Save anyway" with a reason. */
export async function recordToolRegister(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: ToolRegisterForm,
	actor: Actor
): Promise<{ versionId: number; label: string; value: number; findings: BriefFinding[] }> {
	const h = await requireTool(trx, machine, form.h);
	const issues: ReadingIssue[] = [];
	const cutter = await cutterRegisterOf(trx, machine.id);
	const label = componentLabel('tool', h, form.component);
	const value = parseLength(machine, 'value', label, form.value, issues, {
		required: true,
		nonNegative: form.component === 'radius'
	});
	if (issues.length > 0) throw new ReadingInputError(issues);
	const limit = await wearLimitFor(trx, machine);
	const findings: BriefFinding[] =
		form.component === 'radius'
			? []
			: checkWearValue({
					units: machine.units,
					resolution: machine.resolution,
					h,
					component: form.component,
					value: value!,
					limit
				}).map((f) => ({ kind: f.kind, severity: f.severity, message: f.message }));
	const overridden = gateComponent(machine, label, value!, findings, {
		requested: form.override,
		reason: form.overrideReason
	});
	const versionId = await writeComponentVersion(trx, machine, actor, {
		kind: 'tool',
		register: h,
		component: form.component,
		value: value!,
		source: 'entered',
		cutterRegister: cutter,
		reason: form.reason,
		overridden,
		overrideReason: form.overrideReason
	});
	return { versionId, label, value: value!, findings };
}

/** The wear a measured part calls for, with its sign in words. */
export interface PartProposal extends WearProposal {
	h: string;
	component: 'length-wear' | 'radius-wear';
	currentWear: number;
	label: string;
	findings: BriefFinding[];
}

export async function previewPartWear(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: PartMeasurementForm
): Promise<PartProposal> {
	const h = await requireTool(trx, machine, form.h);
	const issues: ReadingIssue[] = [];
	const nominal = parseLength(machine, 'nominal', 'Nominal size', form.nominal, issues, {
		required: true,
		nonNegative: true
	});
	const measured = parseLength(machine, 'measured', 'Measured size', form.measured, issues, {
		required: true,
		nonNegative: true
	});
	if (issues.length > 0) throw new ReadingInputError(issues);
	const component = form.feature === 'depth' ? 'length-wear' : 'radius-wear';
	const cutter = await cutterRegisterOf(trx, machine.id);
	const currentWear = (await currentComponent(trx, machine.id, 'tool', h, component)) ?? 0;
	const limit = await wearLimitFor(trx, machine);
	let p: WearProposal;
	try {
		p = proposeWear({
			units: machine.units,
			feature: form.feature,
			nominal: nominal!,
			measured: measured!,
			currentWear,
			cutterRegister: cutter,
			wearLimit: limit,
			resolution: machine.resolution
		});
	} catch (e) {
		if (!isOffsetInputError(e)) throw e;
		throw new ReadingInputError(e.issues.map((i) => ({ field: i.field, message: i.message })));
	}
	const label = componentLabel('tool', h, component);
	const findings = checkWearValue({
		units: machine.units,
		resolution: machine.resolution,
		h,
		component,
		value: p.newWear,
		limit
	}).map((f) => ({ kind: f.kind, severity: f.severity, message: f.message }));
	return { ...p, h, component, currentWear, label, findings };
}

/** Records the measurement and the new wear version (the proposal accepted). */
export async function acceptPartWear(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: PartMeasurementForm,
	actor: Actor
): Promise<{ partMeasurementId: number; versionId: number; proposal: PartProposal }> {
	const proposal = await previewPartWear(trx, machine, form);
	if (proposal.change === 0)
		throw ReadingInputError.of(
			'measured',
			'The feature is on size: there is no wear change to record.'
		);
	const overridden = gateComponent(machine, proposal.label, proposal.newWear, proposal.findings, {
		requested: form.override,
		reason: form.overrideReason
	});
	const [row] = await trx('part_measurements')
		.insert({
			machine_id: machine.id,
			register: proposal.h,
			feature: form.feature,
			nominal: Number(form.nominal),
			measured: Number(form.measured),
			units: machine.units,
			component: proposal.component,
			change: proposal.change,
			new_wear: proposal.newWear,
			explanation: proposal.explanation,
			note: form.note,
			taken_by: actor.id
		})
		.returning('id');
	const partMeasurementId = Number(row.id);
	const versionId = await writeComponentVersion(trx, machine, actor, {
		kind: 'tool',
		register: proposal.h,
		component: proposal.component,
		value: proposal.newWear,
		source: 'part',
		cutterRegister: await cutterRegisterOf(trx, machine.id),
		partMeasurementId,
		reason: proposal.explanation,
		overridden,
		overrideReason: form.overrideReason
	});
	return { partMeasurementId, versionId, proposal };
}
