/**
 * A reading's preview: the offset the engine works out from what was typed, its change from the
 * last value and its findings, computed in the caller's shop transaction without writing
 * anything. Saving (./record) and queued readings (./queued) compute through these same
 * functions, so what is saved is what was shown.
 */
import type { Knex } from 'knex';
import {
	offsetDelta,
	tipZ,
	toolOffsetFromTouch,
	workOffsetZFromPartTouch,
	type Finding,
	type HistoryEntry
} from '$lib/offsets';
import type { ReadingPreview } from '$lib/reading-preview';
import type { PartTopReadingForm, ToolReadingForm } from '$lib/schemas/readings';
import { masterTouchZOf } from '../offsets/clearance-setup';
import {
	currentOffsets,
	engineMachine,
	listReferences,
	machineState,
	type MachineRecord,
	type ReferenceRecord
} from '../offsets/machine-state';
import { registerFindings, touchSlipFindings, withTouchFindings } from './findings';
import {
	fmtOf,
	fromEngine,
	ReadingInputError,
	readTouch,
	requireChangeReason,
	requireReference,
	type ReadingIssue,
	type TouchForm
} from './input';
import {
	checkCorrection,
	findFixture,
	findTool,
	previousMachineZ,
	type FixtureRef,
	type ToolRef
} from './lookups';

export interface Computed<P> {
	preview: ReadingPreview;
	parsed: P;
}

/** What every touch-off reads before its own steps: the touch, the correction, the reference. */
export interface TouchParsed {
	machineZ: number;
	block: number;
	corrects: number | null;
	reference: ReferenceRecord;
}
export type ToolParsed = TouchParsed & { tool: ToolRef };
export type PartTopParsed = TouchParsed & { fixture: FixtureRef; tool: ToolRef };

/**
 * The value before the one being previewed: the history's second-newest entry (the newest is
 * the preview itself; corrected readings are already left out).
 */
function previousOf(history: HistoryEntry[] | undefined) {
	const e = history && history.length >= 2 ? history[history.length - 2] : undefined;
	return e ? { value: e.value, measuredAt: new Date(e.at).toISOString() } : undefined;
}

/**
 * The steps both previews end with: the machine's checks as if the value were saved, the value
 * before it, the slips in what was typed, and the preview the page shows.
 */
async function assemble(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now: Date,
	p: TouchParsed & {
		registerKind: 'tool' | 'work';
		register: string;
		label: string;
		subject: Finding['subject'];
		value: number;
		changed: boolean;
		same: { toolId?: number; fixtureId?: number };
		working: string;
		/** H of the tool that touched a part top: its own findings carry into the preview. */
		touchingToolH?: number;
	}
): Promise<ReadingPreview> {
	const state = await machineState(trx, machine, now, {
		kind: p.registerKind,
		register: p.register,
		value: p.value,
		// The engine reads a recorded change the same way for tools and fixtures.
		toolChange: p.changed,
		correctsReadingId: p.corrects ?? undefined
	});
	const history = state.checkInput.history;
	const prev = previousOf(
		(p.registerKind === 'tool' ? history?.tools : history?.work)?.[p.register]
	);
	return {
		registerKind: p.registerKind,
		register: p.register,
		label: p.label,
		value: p.value,
		previous: prev?.value ?? null,
		previousAt: prev?.measuredAt ?? null,
		delta: prev ? offsetDelta(p.value, prev.value) : null,
		findings: withTouchFindings(
			touchSlipFindings(machine, p.subject, p.label, {
				machineZ: p.machineZ,
				block: p.block,
				value: p.value,
				previous: prev?.value ?? null,
				previousZ: await previousMachineZ(trx, machine.id, p.same, p.corrects),
				changed: p.changed
			}),
			registerFindings(state.findings, p.registerKind, p.register)
		),
		working: p.working,
		toolFindings:
			p.touchingToolH === undefined
				? []
				: registerFindings(state.findings, 'tool', String(p.touchingToolH)).filter(
						(f) => f.kind !== 'out-of-travel'
					),
		referenceVersion: p.reference.version
	};
}

/**
 * The steps every touch-off reads its form with: the touch, its own checks (`extra`), the reason
 * a recorded change needs, the correction rules, then the machine's reference. Every issue is
 * collected first and refused together (ReadingInputError): nothing is written.
 */
async function readReading<X extends object>(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: TouchForm & { reason: string; correctsReadingId: string },
	same: { toolId: number } | { fixtureId: number },
	change: { changed: boolean; examples: string },
	extra: (issues: ReadingIssue[]) => Promise<X>
): Promise<TouchParsed & X> {
	const issues: ReadingIssue[] = [];
	const { machineZ, block } = readTouch(machine, form, issues);
	const own = await extra(issues);
	requireChangeReason(change.changed, form.reason, change.examples, issues);
	const corrects = await checkCorrection(
		trx,
		machine.id,
		form.correctsReadingId,
		form.reason,
		same,
		issues
	);
	if (issues.length) throw new ReadingInputError(issues);
	const reference = requireReference(machine, await listReferences(trx, machine.id));
	return { ...own, machineZ: machineZ!, block, corrects, reference };
}

/** Tool touch-off or re-measure: the offset the reading gives, and the engine's findings for it. */
export async function previewToolReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	toolId: number | string,
	form: ToolReadingForm,
	now = new Date()
): Promise<Computed<ToolParsed>> {
	const tool = await findTool(trx, machine.id, toolId);
	if (!tool)
		throw ReadingInputError.of('tool', `Tool #${toolId} is not a tool of ${machine.name}.`);
	const { machineZ, block, corrects, reference } = await readReading(
		trx,
		machine,
		form,
		{ toolId: tool.id },
		{
			changed: form.toolChanged,
			examples: 'e.g. broken end mill replaced, new insert, new holder'
		},
		async () => ({})
	);
	const masterTouchZ =
		machine.masterToolH === tool.h
			? tipZ(machineZ, block)
			: ((await masterTouchZOf(trx, machine)) ?? undefined);
	const value = fromEngine(
		() =>
			toolOffsetFromTouch({
				convention: machine.convention,
				units: machine.units,
				touchZ: machineZ,
				setterHeight: block,
				referenceGaugeLineZ: reference.gaugeLineZ ?? undefined,
				masterTouchZ,
				resolution: machine.resolution,
				machine: engineMachine(machine)
			}),
		{ touchZ: 'machineZ', setterHeight: 'blockHeight' },
		machine
	);
	const register = String(tool.h);
	const fmt = fmtOf(machine);
	const sum = `H${register} = machine Z ${fmt(machineZ)} − block ${fmt(block)}`;
	const working =
		machine.convention === 'reference-touch'
			? `${sum} = ${fmt(value)}`
			: machine.convention === 'gauge-length'
				? `${sum} − gauge-line Z ${fmt(reference.gaugeLineZ ?? 0)} = ${fmt(value)}`
				: `${sum} − master tool on the reference = ${fmt(value)}`;
	const parsed = { tool, machineZ, block, corrects, reference };
	return {
		parsed,
		preview: await assemble(trx, machine, now, {
			...parsed,
			registerKind: 'tool',
			register,
			label: `H${register}`,
			subject: { type: 'tool', h: register },
			value,
			changed: form.toolChanged,
			same: { toolId: tool.id },
			working
		})
	};
}

/** The length offset of the tool that touched a part top, or an issue on `withToolId`. */
async function touchingTool(
	trx: Knex.Transaction,
	machine: MachineRecord,
	withToolId: string,
	issues: ReadingIssue[]
): Promise<{ tool?: ToolRef; toolOffset?: number }> {
	if (!withToolId) {
		issues.push({ field: 'withToolId', message: 'Choose the tool that touched the part top.' });
		return {};
	}
	const tool = await findTool(trx, machine.id, withToolId);
	if (!tool) {
		issues.push({
			field: 'withToolId',
			message: `Tool #${withToolId} is not a tool of ${machine.name}.`
		});
		return {};
	}
	const offsets = await currentOffsets(trx, machine.id);
	const toolOffset = offsets.find((o) => o.kind === 'tool' && o.register === String(tool.h))?.value;
	if (toolOffset === undefined) {
		issues.push({
			field: 'withToolId',
			message: `T${tool.t} has no length offset (H${tool.h}) recorded yet: touch it off first, or choose another tool.`
		});
	}
	return { tool, toolOffset };
}

/** Part-top touch with a tool whose length offset is recorded: W = reading − block − H. */
export async function previewPartTopReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	fixtureId: number | string,
	form: PartTopReadingForm,
	now = new Date()
): Promise<Computed<PartTopParsed>> {
	const fixture = await findFixture(trx, machine.id, fixtureId);
	if (!fixture)
		throw ReadingInputError.of(
			'fixture',
			`Fixture #${fixtureId} is not a fixture of ${machine.name}.`
		);
	const { machineZ, block, corrects, reference, tool, toolOffset } = await readReading(
		trx,
		machine,
		form,
		{ fixtureId: fixture.id },
		{ changed: form.fixtureChanged, examples: 'e.g. new part in the vise, fixture re-seated' },
		(issues) => touchingTool(trx, machine, form.withToolId, issues)
	);
	const value = fromEngine(
		() =>
			workOffsetZFromPartTouch({
				units: machine.units,
				partTopZ: machineZ,
				toolOffset: toolOffset!,
				setterHeight: block,
				resolution: machine.resolution,
				machine: engineMachine(machine)
			}),
		{ partTopZ: 'machineZ', setterHeight: 'blockHeight', toolOffset: 'withToolId' },
		machine
	);
	const register = fixture.register;
	const fmt = fmtOf(machine);
	const parsed = { fixture, tool: tool!, machineZ, block, corrects, reference };
	return {
		parsed,
		preview: await assemble(trx, machine, now, {
			...parsed,
			registerKind: 'work',
			register,
			label: register,
			subject: { type: 'fixture', register },
			value,
			changed: form.fixtureChanged,
			same: { fixtureId: fixture.id },
			working: `${register} Z = machine Z ${fmt(machineZ)} − block ${fmt(block)} − H${tool!.h} ${fmt(toolOffset!)} = ${fmt(value)}`,
			touchingToolH: tool!.h
		})
	};
}
