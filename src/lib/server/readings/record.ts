/**
 * Readings → offsets, on the server: turns what the operator typed into lengths, asks the engine
 * for the offset and its findings (preview), and records the Reading with its new offset version
 * in the caller's shop transaction (save). Nothing here commits on its own: withShop's
 * transaction does, so a reading and its offset version are written together or not at all.
 */
import type { Knex } from 'knex';
import {
	blockHeightSlip,
	decimalsFor,
	describeSlip,
	findingTitle,
	formatWithUnits,
	isOffsetInputError,
	makeFinding,
	nameSlip,
	resolvePolicy,
	slipsIntoRange,
	toolOffsetFromTouch,
	workOffsetZFromPartTouch,
	type Finding,
	type HistoryEntry
} from '$lib/offsets';
import { numberTextMessage, readNumberText } from '$lib/offsets/number-text';
import { LENGTH_PLACES } from '$lib/schemas/number';
import type { PartTopReadingForm, ToolReadingForm, TouchThrough } from '$lib/schemas/readings';
import { audit } from '../audit';
import { recheckMachine, resolveOverride } from '../fleet/recheck';
import { masterTouchZOf } from '../offsets/clearance-setup';
import {
	currentOffsets,
	engineMachine,
	listReferences,
	machineState,
	type MachineRecord,
	type ReferenceRecord
} from '../offsets/machine-state';

/** One reason the input was refused: the form field and a sentence saying why. */
export interface ReadingIssue {
	field: string;
	message: string;
}

/** Thrown for input that cannot be recorded; nothing has been written when it is. */
export class ReadingInputError extends Error {
	constructor(readonly issues: ReadingIssue[]) {
		super(issues.map((i) => `${i.field}: ${i.message}`).join('; '));
		this.name = 'ReadingInputError';
	}
	static of(field: string, message: string) {
		return new ReadingInputError([{ field, message }]);
	}
}

export type BriefFinding = Pick<Finding, 'kind' | 'severity' | 'message'>;
const brief = (f: Finding): BriefFinding => ({
	kind: f.kind,
	severity: f.severity,
	message: f.message
});

/** Who is recording, for the reading, the offset version and the audit log. */
export interface Actor {
	id: number;
	email: string;
	ip?: string;
}

/** What the page shows before saving. */
export interface ReadingPreview {
	registerKind: 'tool' | 'work';
	register: string;
	/** "H2" or "G54". */
	label: string;
	value: number;
	previous: number | null;
	previousAt: string | null;
	delta: number | null;
	findings: BriefFinding[];
	/** The lengths that went into the sum, for the "how it was worked out" line. */
	working: string;
	/** Findings on the tool used for a part-top touch (its own offset feeds this one). */
	toolFindings: BriefFinding[];
	referenceVersion: number;
}

/**
 * A length as typed, read by the app's one strict number reader (`readNumberText`: a point for
 * decimals, no comma, no unit, no trailing text), with no more decimals than the control shows
 * and no more than the database keeps. Collects issues instead of throwing.
 */
export function parseLength(
	machine: MachineRecord,
	field: string,
	label: string,
	raw: string,
	issues: ReadingIssue[],
	opts: { required?: boolean; nonNegative?: boolean } = {}
): number | undefined {
	const read = readNumberText(raw);
	if (!read.ok && read.empty) {
		if (opts.required) issues.push({ field, message: `${label} is required.` });
		return undefined;
	}
	const u = machine.units === 'inch' ? 'in' : 'mm';
	if (!read.ok) {
		issues.push({
			field,
			message: numberTextMessage(label, raw, read.reason, {
				example: machine.units === 'inch' ? '-14.7502 in' : '-289.835 mm'
			})
		});
		return undefined;
	}
	const places = read.places;
	const allowed = Math.min(decimalsFor(machine.resolution), LENGTH_PLACES);
	if (places > allowed) {
		issues.push({
			field,
			message: `${label} has ${places} decimals; ${machine.name} reads to ${formatWithUnits(machine.resolution, machine.units, machine.resolution)}, so type at most ${allowed}.`
		});
		return undefined;
	}
	const v = read.value;
	if (opts.nonNegative && v < 0) {
		issues.push({ field, message: `${label} cannot be negative (got ${v} ${u}).` });
		return undefined;
	}
	return v;
}

/** The block height and instrument must agree: "directly" means no block; a block has a height. */
function blockFrom(
	machine: MachineRecord,
	through: TouchThrough,
	raw: string,
	issues: ReadingIssue[]
): number {
	const before = issues.length;
	const h = parseLength(machine, 'blockHeight', 'Block height', raw, issues, { nonNegative: true });
	if (issues.length > before) return 0;
	if (through === 'directly') {
		if (h !== undefined && h !== 0) {
			issues.push({
				field: 'blockHeight',
				message: `You chose "directly" but gave a block height of ${raw}: choose what the tip touched, or clear the height.`
			});
		}
		return 0;
	}
	if (h === undefined || h === 0) {
		issues.push({
			field: 'blockHeight',
			message: `Give the height of the ${through} the tip touched (it is subtracted from the reading).`
		});
		return 0;
	}
	return h;
}

/** Engine refusals → form fields. */
function engineIssues(e: unknown, map: Record<string, string>, machine: MachineRecord): never {
	if (!isOffsetInputError(e)) throw e;
	throw new ReadingInputError(
		e.issues.map((i) => {
			const root = i.field.replace(/^input\./, '');
			const field = map[root] ?? map['*'] ?? 'machineZ';
			if (root === 'referenceGaugeLineZ') {
				return {
					field,
					message: `${machine.name}'s reference has no gauge-line Z recorded, which the gauge-length convention needs: a lead must re-establish the reference with it first.`
				};
			}
			if (root === 'masterTouchZ') {
				return {
					field,
					message: `The master tool (H${machine.masterToolH ?? '?'}) has no reading on the reference yet: touch it off first.`
				};
			}
			const label = field === 'blockHeight' ? 'Block height' : 'Machine Z';
			return { field, message: `${label} ${i.message}.${slipHint(machine, field, i.value)}` };
		})
	);
}

/**
 * For a machine Z outside the travel (or a block taller than it), which typing slip explains it
 * and the value it would give: " It is probably the decimal point … : -14.7502 in was likely meant."
 */
function slipHint(machine: MachineRecord, field: string, value: unknown): string {
	if (typeof value !== 'number' || !Number.isFinite(value)) return '';
	const range =
		field === 'blockHeight' ? { min: 0, max: machine.zTravel } : { min: -machine.zTravel, max: 0 };
	const slips = slipsIntoRange(value, range, machine.units, machine.resolution);
	if (slips.length === 0) return '';
	return ` It is ${slips.map((x) => describeSlip(x, machine.units, machine.resolution)).join('; or ')}.`;
}

/**
 * Slips in what was typed at the machine, named with the value meant (./slips in the engine):
 * the machine Z against the last reading of the same tool or fixture, and the block height
 * against the offset it moves. A block slip that moves the offset past the shop's jump limit is
 * a Stop; a machine Z slip is a Stop unless a change was recorded.
 */
function touchSlipFindings(
	machine: MachineRecord,
	subject: Finding['subject'],
	label: string,
	t: {
		machineZ: number;
		block: number;
		value: number;
		previous: number | null;
		previousZ: number | null;
		changed: boolean;
	}
): Finding[] {
	const policy = resolvePolicy(undefined, machine.units);
	const fmt = fmtOf(machine);
	const out: Finding[] = [];
	const block = blockHeightSlip({
		block: t.block,
		offset: t.value,
		previousOffset: t.previous,
		zTravel: machine.zTravel,
		units: machine.units,
		resolution: machine.resolution,
		policy
	});
	if (block) {
		out.push(
			makeFinding(
				block.kind,
				'stop',
				subject,
				`Block height ${fmt(t.block)} is ${describeSlip(block, machine.units, machine.resolution)}. ` +
					`It moves ${label} by ${fmt(Math.abs(block.moved))}${t.previous !== null ? `, more than the shop's jump limit of ${fmt(policy.jumpTolerance)}` : ''}; with ${fmt(block.corrected)} ${label} would be ${fmt(block.correctedOffset)}. Check the block and re-enter its height.`,
				{ field: 'blockHeight', slip: block.rule, corrected: block.corrected }
			)
		);
		return out;
	}
	if (t.previousZ !== null) {
		const z = nameSlip(t.machineZ, t.previousZ, machine.units, machine.resolution, policy);
		if (z) {
			out.push(
				makeFinding(
					z.kind,
					t.changed ? 'caution' : 'stop',
					subject,
					`Machine Z ${fmt(t.machineZ)} against the last reading ${fmt(t.previousZ)} is ${describeSlip(z, machine.units, machine.resolution)}. Read the control again and re-enter it.`,
					{ field: 'machineZ', slip: z.rule, corrected: z.corrected }
				)
			);
		}
	}
	return out;
}

/** Touch findings first; the engine's finding of the same kind on the register is then dropped. */
function withTouchFindings(touch: Finding[], engine: BriefFinding[]): BriefFinding[] {
	const kinds = new Set(touch.map((f) => f.kind));
	return [...touch.map(brief), ...engine.filter((f) => !kinds.has(f.kind))].sort((a, b) =>
		a.severity === b.severity ? 0 : a.severity === 'stop' ? -1 : 1
	);
}

/** The machine Z of the newest uncorrected reading of a tool or fixture (same kind of touch). */
async function previousMachineZ(
	trx: Knex.Transaction,
	machineId: number,
	where: { toolId?: number; fixtureId?: number },
	excludeReadingId: number | null
): Promise<number | null> {
	const r = await trx('readings as r')
		.where('r.machine_id', machineId)
		.modify((q) =>
			where.fixtureId !== undefined
				? q.where({ 'r.kind': 'part-top', 'r.fixture_id': where.fixtureId })
				: q.where('r.tool_id', where.toolId!).whereIn('r.kind', ['tool-touch', 'tool-remeasure'])
		)
		.whereRaw('not exists (select 1 from readings c where c.corrects_reading_id = r.id)')
		.whereRaw('cardinality(r.overridden_findings) = 0')
		.modify((q) => {
			if (excludeReadingId) q.whereNot('r.id', excludeReadingId);
		})
		.orderBy([
			{ column: 'r.taken_at', order: 'desc' },
			{ column: 'r.id', order: 'desc' }
		])
		.first('r.machine_z');
	return r ? Number(r.machine_z) : null;
}

function requireReference(machine: MachineRecord, references: ReferenceRecord[]): ReferenceRecord {
	const ref = references[0];
	if (!ref) {
		throw ReadingInputError.of(
			'machineZ',
			`${machine.name} has no reference recorded, so no offset can be worked out: a lead must establish one first.`
		);
	}
	return ref;
}

interface ToolRow {
	id: number;
	t: number;
	h: number;
	description: string;
}

/** A tool of this machine (not archived), or undefined. */
export async function findTool(
	trx: Knex.Transaction,
	machineId: number,
	toolId: number | string
): Promise<ToolRow | undefined> {
	const id = Number(toolId);
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const r = await trx('tools')
		.where({ id, machine_id: machineId })
		.whereNull('archived_at')
		.first();
	return r
		? { id: Number(r.id), t: r.t_number, h: r.h_number, description: r.description }
		: undefined;
}

interface FixtureRow {
	id: number;
	register: string;
	name: string;
}

/** A fixture of this machine (not archived), or undefined. */
export async function findFixture(
	trx: Knex.Transaction,
	machineId: number,
	fixtureId: number | string
): Promise<FixtureRow | undefined> {
	const id = Number(fixtureId);
	if (!Number.isSafeInteger(id) || id <= 0) return undefined;
	const r = await trx('fixtures')
		.where({ id, machine_id: machineId })
		.whereNull('archived_at')
		.first();
	return r ? { id: Number(r.id), register: r.register, name: r.name } : undefined;
}

/**
 * Correction rules: the corrected reading exists on this machine, measured the same thing,
 * has not been corrected already (correct the newest one instead), and a reason is given.
 */
export async function checkCorrection(
	trx: Knex.Transaction,
	machineId: number,
	raw: string,
	reason: string,
	same: { toolId?: number; fixtureId?: number },
	issues: ReadingIssue[]
): Promise<number | null> {
	if (!raw) return null;
	const id = Number(raw);
	const old = Number.isSafeInteger(id)
		? await trx('readings').where({ id, machine_id: machineId }).first()
		: undefined;
	if (!old) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${raw} is not a reading on this machine: nothing to correct.`
		});
		return null;
	}
	const matches =
		same.fixtureId !== undefined
			? old.kind === 'part-top' && Number(old.fixture_id) === same.fixtureId
			: old.kind !== 'part-top' && Number(old.tool_id) === same.toolId;
	if (!matches) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${id} measured something else; a correction must measure the same ${same.fixtureId !== undefined ? 'fixture' : 'tool'}.`
		});
	}
	// Only the reading behind the current value: an older one is history, re-measure instead.
	const newest = await trx('readings')
		.where({ machine_id: machineId })
		.modify((q) =>
			same.fixtureId !== undefined
				? q.where({ kind: 'part-top', fixture_id: same.fixtureId })
				: q.where({ tool_id: same.toolId }).whereIn('kind', ['tool-touch', 'tool-remeasure'])
		)
		.orderBy([
			{ column: 'taken_at', order: 'desc' },
			{ column: 'id', order: 'desc' }
		])
		.first('id');
	const later = await trx('readings').where({ corrects_reading_id: id }).first('id');
	if (matches && !later && newest && Number(newest.id) !== id) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${id} is not the newest of this ${same.fixtureId !== undefined ? 'fixture' : 'tool'} (that is #${newest.id}): only the reading behind the current value can be corrected. Take a new reading instead.`
		});
	}
	if (later) {
		issues.push({
			field: 'correctsReadingId',
			message: `Reading #${id} was already corrected by reading #${later.id}; correct that one instead.`
		});
	}
	if (!reason) {
		issues.push({ field: 'reason', message: 'Say what was wrong with the reading you correct.' });
	}
	return id;
}

function registerFindings(findings: Finding[], kind: 'tool' | 'work', register: string) {
	return findings
		.filter((f) =>
			kind === 'tool'
				? (f.subject.type === 'tool' || f.subject.type === 'setup') && f.subject.h === register
				: (f.subject.type === 'fixture' || f.subject.type === 'setup') &&
					f.subject.register === register &&
					!(f.subject.type === 'setup' && f.subject.h)
		)
		.map(brief);
}

/**
 * The value before the one being previewed: the history's second-newest entry (the newest is
 * the preview itself; corrected readings are already left out).
 */
function previousOf(history: HistoryEntry[] | undefined) {
	const e = history && history.length >= 2 ? history[history.length - 2] : undefined;
	return e ? { value: e.value, measuredAt: new Date(e.at).toISOString() } : undefined;
}

const fmtOf = (m: MachineRecord) => (v: number) => formatWithUnits(v, m.units, m.resolution);

interface Computed<P> {
	preview: ReadingPreview;
	parsed: P;
}

/** Tool touch-off or re-measure: the offset the reading gives, and the engine's findings for it. */
export async function previewToolReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	toolId: number | string,
	form: ToolReadingForm,
	now = new Date()
): Promise<
	Computed<{
		tool: ToolRow;
		machineZ: number;
		block: number;
		corrects: number | null;
		reference: ReferenceRecord;
	}>
> {
	const tool = await findTool(trx, machine.id, toolId);
	if (!tool)
		throw ReadingInputError.of('tool', `Tool #${toolId} is not a tool of ${machine.name}.`);
	const issues: ReadingIssue[] = [];
	const machineZ = parseLength(machine, 'machineZ', 'Machine Z', form.machineZ, issues, {
		required: true
	});
	const block = blockFrom(machine, form.touchedThrough, form.blockHeight, issues);
	if (form.toolChanged && !form.reason) {
		issues.push({
			field: 'reason',
			message: 'Say what changed (e.g. broken end mill replaced, new insert, new holder).'
		});
	}
	const corrects = await checkCorrection(
		trx,
		machine.id,
		form.correctsReadingId,
		form.reason,
		{ toolId: tool.id },
		issues
	);
	if (issues.length) throw new ReadingInputError(issues);
	const references = await listReferences(trx, machine.id);
	const reference = requireReference(machine, references);

	let value: number;
	try {
		value = toolOffsetFromTouch({
			convention: machine.convention,
			units: machine.units,
			touchZ: machineZ!,
			setterHeight: block,
			referenceGaugeLineZ: reference.gaugeLineZ ?? undefined,
			masterTouchZ:
				machine.masterToolH === tool.h
					? machineZ! - block
					: ((await masterTouchZOf(trx, machine)) ?? undefined),
			resolution: machine.resolution,
			machine: engineMachine(machine)
		});
	} catch (e) {
		engineIssues(e, { touchZ: 'machineZ', setterHeight: 'blockHeight' }, machine);
	}
	const register = String(tool.h);
	const state = await machineState(trx, machine, now, {
		kind: 'tool',
		register,
		value,
		toolChange: form.toolChanged,
		correctsReadingId: corrects ?? undefined
	});
	const prev = previousOf(state.checkInput.history?.tools?.[register]);
	const fmt = fmtOf(machine);
	const working =
		machine.convention === 'reference-touch'
			? `H${register} = machine Z ${fmt(machineZ!)} − block ${fmt(block)} = ${fmt(value)}`
			: machine.convention === 'gauge-length'
				? `H${register} = machine Z ${fmt(machineZ!)} − block ${fmt(block)} − gauge-line Z ${fmt(reference.gaugeLineZ ?? 0)} = ${fmt(value)}`
				: `H${register} = machine Z ${fmt(machineZ!)} − block ${fmt(block)} − master tool on the reference = ${fmt(value)}`;
	return {
		parsed: { tool, machineZ: machineZ!, block, corrects, reference },
		preview: {
			registerKind: 'tool',
			register,
			label: `H${register}`,
			value,
			previous: prev?.value ?? null,
			previousAt: prev?.measuredAt ?? null,
			delta: prev ? Math.round((value - prev.value) * 1e6) / 1e6 : null,
			findings: withTouchFindings(
				touchSlipFindings(machine, { type: 'tool', h: register }, `H${register}`, {
					machineZ: machineZ!,
					block,
					value,
					previous: prev?.value ?? null,
					previousZ: await previousMachineZ(trx, machine.id, { toolId: tool.id }, corrects),
					changed: form.toolChanged
				}),
				registerFindings(state.findings, 'tool', register)
			),
			working,
			toolFindings: [],
			referenceVersion: reference.version
		}
	};
}

/** Part-top touch with a tool whose length offset is recorded: W = reading − block − H. */
export async function previewPartTopReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	fixtureId: number | string,
	form: PartTopReadingForm,
	now = new Date()
): Promise<
	Computed<{
		fixture: FixtureRow;
		tool: ToolRow;
		machineZ: number;
		block: number;
		corrects: number | null;
		reference: ReferenceRecord;
	}>
> {
	const fixture = await findFixture(trx, machine.id, fixtureId);
	if (!fixture)
		throw ReadingInputError.of(
			'fixture',
			`Fixture #${fixtureId} is not a fixture of ${machine.name}.`
		);
	const issues: ReadingIssue[] = [];
	const machineZ = parseLength(machine, 'machineZ', 'Machine Z', form.machineZ, issues, {
		required: true
	});
	const block = blockFrom(machine, form.touchedThrough, form.blockHeight, issues);
	const tool = form.withToolId ? await findTool(trx, machine.id, form.withToolId) : undefined;
	let toolOffset: number | undefined;
	if (!form.withToolId) {
		issues.push({ field: 'withToolId', message: 'Choose the tool that touched the part top.' });
	} else if (!tool) {
		issues.push({
			field: 'withToolId',
			message: `Tool #${form.withToolId} is not a tool of ${machine.name}.`
		});
	} else {
		const offsets = await currentOffsets(trx, machine.id);
		toolOffset = offsets.find((o) => o.kind === 'tool' && o.register === String(tool.h))?.value;
		if (toolOffset === undefined) {
			issues.push({
				field: 'withToolId',
				message: `T${tool.t} has no length offset (H${tool.h}) recorded yet: touch it off first, or choose another tool.`
			});
		}
	}
	if (form.fixtureChanged && !form.reason) {
		issues.push({
			field: 'reason',
			message: 'Say what changed (e.g. new part in the vise, fixture re-seated).'
		});
	}
	const corrects = await checkCorrection(
		trx,
		machine.id,
		form.correctsReadingId,
		form.reason,
		{ fixtureId: fixture.id },
		issues
	);
	if (issues.length) throw new ReadingInputError(issues);
	const reference = requireReference(machine, await listReferences(trx, machine.id));

	let value: number;
	try {
		value = workOffsetZFromPartTouch({
			units: machine.units,
			partTopZ: machineZ!,
			toolOffset: toolOffset!,
			setterHeight: block,
			resolution: machine.resolution,
			machine: engineMachine(machine)
		});
	} catch (e) {
		engineIssues(
			e,
			{ partTopZ: 'machineZ', setterHeight: 'blockHeight', toolOffset: 'withToolId' },
			machine
		);
	}
	const register = fixture.register;
	const state = await machineState(trx, machine, now, {
		kind: 'work',
		register,
		value,
		// The engine reads a recorded change the same way for tools and fixtures.
		toolChange: form.fixtureChanged,
		correctsReadingId: corrects ?? undefined
	});
	const prev = previousOf(state.checkInput.history?.work?.[register]);
	const fmt = fmtOf(machine);
	return {
		parsed: { fixture, tool: tool!, machineZ: machineZ!, block, corrects, reference },
		preview: {
			registerKind: 'work',
			register,
			label: register,
			value,
			previous: prev?.value ?? null,
			previousAt: prev?.measuredAt ?? null,
			delta: prev ? Math.round((value - prev.value) * 1e6) / 1e6 : null,
			findings: withTouchFindings(
				touchSlipFindings(machine, { type: 'fixture', register }, register, {
					machineZ: machineZ!,
					block,
					value,
					previous: prev?.value ?? null,
					previousZ: await previousMachineZ(trx, machine.id, { fixtureId: fixture.id }, corrects),
					changed: form.fixtureChanged
				}),
				registerFindings(state.findings, 'work', register)
			),
			working: `${register} Z = machine Z ${fmt(machineZ!)} − block ${fmt(block)} − H${tool!.h} ${fmt(toolOffset!)} = ${fmt(value)}`,
			toolFindings: registerFindings(state.findings, 'tool', String(tool!.h)).filter(
				(f) => f.kind !== 'out-of-travel'
			),
			referenceVersion: reference.version
		}
	};
}

/** What was written. */
export interface Recorded {
	readingId: number;
	offsetVersionId: number;
	preview: ReadingPreview;
}

/** What the operator chose in the override dialog. */
export interface OverrideChoice {
	requested: boolean;
	reason: string;
}

/** The Stop findings a save would go over (the register's own and the touching tool's). */
export function stopsOf(preview: ReadingPreview): BriefFinding[] {
	return [...preview.findings, ...preview.toolFindings].filter((f) => f.severity === 'stop');
}

/**
 * Server-side gate of the override: a value the checks call Stop is saved only with "Save
 * anyway" and a reason, whatever the page sent. Nothing is written when it refuses.
 */
function requireOverride(machine: MachineRecord, preview: ReadingPreview, o: OverrideChoice) {
	const stops = stopsOf(preview);
	if (stops.length === 0) return null;
	if (o.requested && o.reason.trim().length > 0) return stops;
	const titles = [...new Set(stops.map((f) => findingTitle(f.kind)))].join('; ');
	throw ReadingInputError.of(
		'overrideReason',
		`${preview.label} ${fmtOf(machine)(preview.value)} is Stop (${titles}). It was not saved: re-measure it, or choose "Save anyway" and give the reason.`
	);
}

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
			created_by: actor.id
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

/** The override's audit entry and its finding, which leads see on the board and in the digest. */
async function recordOverride(
	trx: Knex.Transaction,
	machine: MachineRecord,
	actor: Actor,
	preview: ReadingPreview,
	overridden: BriefFinding[],
	reason: string,
	ref: { readingId: number; subjectKey: string; auditTarget: string }
) {
	const user = await trx('public.users').where({ id: actor.id }).first('name');
	const who = user?.name || actor.email;
	const titles = [...new Set(overridden.map((f) => findingTitle(f.kind)))].join('; ');
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'reading.override',
		target: ref.auditTarget,
		detail: {
			machineId: machine.id,
			readingId: ref.readingId,
			register: preview.label,
			value: preview.value,
			units: machine.units,
			overridden: overridden.map((f) => f.kind),
			reason
		}
	});
	const now = new Date().toISOString();
	await trx.raw(
		`insert into findings as f (key, machine_id, kind, severity, subject_type, subject, message,
			status, first_seen_at, last_seen_at, previous_finding_id)
		values (:key, :machineId, 'override', 'stop', :subjectType, :subject, :message, 'open', :now, :now,
			(select p.id from findings p where p.key = :key and p.status = 'resolved'
				order by p.resolved_at desc nulls last, p.id desc limit 1))
		on conflict (key) where status <> 'resolved' do update set
			message = excluded.message, last_seen_at = excluded.last_seen_at`,
		{
			key: `m${machine.id}|override|${ref.subjectKey}`,
			machineId: machine.id,
			subjectType: preview.registerKind === 'tool' ? 'tool' : 'fixture',
			subject: preview.label,
			message: `${preview.label} was saved as ${fmtOf(machine)(preview.value)} over a Stop (${titles}) by ${who} (reading #${ref.readingId}): "${reason}". It stays out of load programs; check it at the control or re-measure it.`,
			now
		}
	);
}

export const instrumentText = (through: TouchThrough, block: number, machine: MachineRecord) =>
	through === 'directly'
		? 'directly'
		: `${through} ${formatWithUnits(block, machine.units, machine.resolution)}`;

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
	return writeReadingAndOffset(
		trx,
		machine,
		actor,
		{
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
		preview,
		`${machine.name} T${parsed.tool.t} H${parsed.tool.h}`,
		{ requested: form.override, reason: form.overrideReason }
	);
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
	return writeReadingAndOffset(
		trx,
		machine,
		actor,
		{
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
		preview,
		`${machine.name} ${parsed.fixture.register}`,
		{ requested: form.override, reason: form.overrideReason }
	);
}
