/**
 * Recording a read-back: what the control holds (its saved file, or values typed from its
 * screen) compared with Datumkeep's current offsets, stored as an append-only record with every
 * value, then the machine's read-back findings brought up to date. Nothing else changes: a
 * read-back never edits an offset. Runs in the caller's shop transaction (withShop).
 */
import type { Knex } from 'knex';
import {
	canonicalH,
	canonicalRegister,
	compareReadback,
	isOffsetInputError,
	parseControlFile,
	type ControlFile,
	type ExpectedComponents,
	type OffsetTable,
	type ReadbackComparison,
	type ReadbackValues
} from '$lib/offsets';
import { TOOL_COMPONENT_KEY, type ToolComponent } from '$lib/schemas/components';
import type { ReadbackRequest } from '$lib/schemas/readback';
import { audit } from '../audit';
import {
	currentOffsets,
	engineMachine,
	tableFrom,
	type MachineRecord
} from '../offsets/machine-state';
import type { Actor } from '../actor';
import { parseLength, ReadingInputError, type ReadingIssue } from '../readings/input';
import { currentComponents, type CurrentComponent } from '../components/store';
import { readbackHours, syncReadbackFindings } from './findings';

export interface RecordedReadback {
	id: number;
	takenAt: string;
	source: 'file' | 'typed';
	comparison: ReadbackComparison;
	/** The file's remarks (assumed units, axes left out) and lines it could not read. */
	notes: string[];
	skipped: { field: string; message: string }[];
}

/** Typed values → lengths in the machine's units, each register named in its message. */
function typedValues(
	machine: MachineRecord,
	values: Extract<ReadbackRequest, { source: 'typed' }>['values']
): ReadbackValues {
	const issues: ReadingIssue[] = [];
	const out: Required<Pick<ReadbackValues, 'work' | 'tools' | 'wear'>> = {
		work: {},
		tools: {},
		wear: {}
	};
	for (const section of ['work', 'tools', 'wear'] as const) {
		for (const [key, raw] of Object.entries(values[section] ?? {})) {
			const register = section === 'work' ? canonicalRegister(key) : canonicalH(key);
			const name = section === 'work' ? (register ?? key) : `H${register ?? key}`;
			const field = `values.${section}.${key}`;
			if (register === null) {
				issues.push({
					field,
					message:
						section === 'work'
							? `"${key}" is not a work offset Datumkeep keeps (G54–G59, G54.1 P1–P48).`
							: `"${key}" is not an H number (1–9999).`
				});
				continue;
			}
			const text = typeof raw === 'number' ? String(raw) : raw;
			const label = section === 'wear' ? `${name} wear` : name;
			const v = parseLength(machine, field, label, text, issues);
			if (v !== undefined) out[section][register] = v;
		}
	}
	if (issues.length > 0) throw new ReadingInputError(issues);
	if (Object.keys(out.work).length + Object.keys(out.tools).length === 0)
		throw ReadingInputError.of(
			'values',
			'Type at least one register’s value as the control shows it.'
		);
	return out;
}

function fileValues(machine: MachineRecord, text: string): ControlFile {
	try {
		return parseControlFile(text, engineMachine(machine));
	} catch (e) {
		if (isOffsetInputError(e))
			throw new ReadingInputError(
				e.issues.map((i) => ({ field: `file ${i.field}`, message: i.message }))
			);
		throw e;
	}
}

/** Older values of every register (not the current version), for the "stale" cause. */
async function olderValues(
	trx: Knex.Transaction,
	machine: MachineRecord,
	currentIds: number[]
): Promise<{ work: Record<string, number[]>; tools: Record<string, number[]> }> {
	const rows = await trx('offset_versions')
		.where({ machine_id: machine.id, convention: machine.convention, units: machine.units })
		.modify((q) => {
			if (currentIds.length > 0) q.whereNotIn('id', currentIds);
		})
		.select('register_kind', 'register', 'value');
	const out: { work: Record<string, number[]>; tools: Record<string, number[]> } = {
		work: {},
		tools: {}
	};
	for (const r of rows)
		(r.register_kind === 'work' ? out.work : out.tools)[r.register] = [
			...((r.register_kind === 'work' ? out.work : out.tools)[r.register] ?? []),
			Number(r.value)
		];
	return out;
}

export async function recordReadback(
	trx: Knex.Transaction,
	shopId: number,
	machine: MachineRecord,
	actor: Actor,
	req: ReadbackRequest,
	now = new Date()
): Promise<RecordedReadback> {
	let setupRegisters: { work: string[]; tools: string[] } | null = null;
	if (req.setupId !== undefined) {
		const setup = await trx('setups')
			.where({ id: req.setupId, machine_id: machine.id })
			.first('id');
		if (!setup) throw ReadingInputError.of('setupId', 'That setup is not on this machine.');
		setupRegisters = await setupRegistersOf(trx, req.setupId);
	}
	const file = req.source === 'file' ? fileValues(machine, req.text) : null;
	const actual: ReadbackValues = req.source === 'file' ? file! : typedValues(machine, req.values);

	const offsets = await currentOffsets(trx, machine.id);
	const full = tableFrom(machine, offsets);
	// Typed: compare what was typed, plus the setup's registers (a blank one shows as not read).
	const expected: OffsetTable =
		req.source === 'typed'
			? {
					...full,
					work: pick(full.work, [...Object.keys(actual.work), ...(setupRegisters?.work ?? [])]),
					tools: pick(full.tools, [...Object.keys(actual.tools), ...(setupRegisters?.tools ?? [])])
				}
			: full;
	const history = await olderValues(
		trx,
		machine,
		offsets.map((o) => o.offsetVersionId)
	);
	// Beside Z (issue 20): a saved file carries X/Y, radii and wear; typed values do not.
	const comps = req.source === 'file' ? await currentComponents(trx, machine.id) : [];
	const componentHistory = await olderComponentValues(trx, machine, comps);
	const comparison = compareReadback({
		machine: engineMachine(machine),
		expected,
		actual,
		history: { ...history, components: componentHistory },
		...(comps.length > 0 ? { expectedComponents: expectedComponentsOf(comps) } : {})
	});
	const componentVersion = new Map<string, number>(
		comps.map((c) => [`${c.register}|${c.component}`, c.versionId])
	);

	const [rb] = await trx('readbacks')
		.insert({
			machine_id: machine.id,
			setup_id: req.setupId ?? null,
			source: req.source,
			file_name: req.source === 'file' ? req.fileName : '',
			file_text: req.source === 'file' ? req.text : null,
			units: machine.units,
			control_style: machine.controlStyle,
			equal_count: comparison.equal,
			different_count: comparison.different,
			note: req.note,
			taken_by: actor.id,
			taken_at: now
		})
		.returning(['id', 'taken_at']);
	const versionOf = new Map(offsets.map((o) => [`${o.kind}|${o.register}`, o.offsetVersionId]));
	const kindOf = (section: 'work' | 'tools') => (section === 'work' ? 'work' : 'tool');
	/** The version a compared value stands against: a component's, or the Z/length register's. */
	const versionIds = (o: { component?: string; section: 'work' | 'tools'; register: string }) => ({
		offset_version_id: o.component
			? null
			: (versionOf.get(`${kindOf(o.section)}|${o.register}`) ?? null),
		component_version_id: o.component
			? (componentVersion.get(`${o.register}|${o.component}`) ?? null)
			: null
	});
	const rows: Record<string, unknown>[] = [
		...comparison.rows.map((r) => ({
			register_kind: r.component ?? kindOf(r.section),
			register: r.register,
			value: r.actual,
			expected: r.expected,
			...versionIds(r),
			status: r.status,
			causes: JSON.stringify(r.causes),
			no_point_text: r.noPoint?.text ?? null
		})),
		...comparison.onlyAtControl.map((o) => ({
			register_kind: kindOf(o.section),
			register: o.register,
			value: o.value,
			status: 'only-control',
			no_point_text:
				actual.noPoint?.find((f) => f.section === o.section && f.register === o.register)?.text ??
				null
		})),
		...comparison.onlyInDatumkeep.map((o) => ({
			register_kind: o.component ?? kindOf(o.section),
			register: o.register,
			expected: o.value,
			...versionIds(o),
			status: 'only-datumkeep'
		})),
		...Object.entries(actual.wear ?? {}).map(([h, value]) => ({
			register_kind: 'wear',
			register: h,
			value,
			status: 'noted'
		})),
		...(actual.other ?? []).map((o) => ({
			register_kind: 'other',
			register: o.label,
			value: o.value,
			status: 'noted'
		}))
	];
	if (rows.length > 0)
		await trx('readback_values').insert(
			rows.map((r) => ({ readback_id: rb.id, machine_id: machine.id, ...r }))
		);
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		ip: actor.ip,
		action: 'readback.recorded',
		target: `machine:${machine.id}`,
		detail: {
			readbackId: Number(rb.id),
			source: req.source,
			equal: comparison.equal,
			different: comparison.different,
			mismatched: comparison.rows.filter((r) => r.status === 'different').map((r) => r.label)
		}
	});
	const setupNames = await setupNameMap(trx, machine.id);
	await syncReadbackFindings(trx, machine, now, await readbackHours(trx, shopId), setupNames);
	return {
		id: Number(rb.id),
		takenAt: new Date(rb.taken_at).toISOString(),
		source: req.source,
		comparison,
		notes: file?.notes ?? [],
		skipped: file?.skipped ?? []
	};
}

/** Datumkeep's current X/Y, radius and wear, as the engine's read-back takes them. */
function expectedComponentsOf(comps: CurrentComponent[]): ExpectedComponents {
	const out: Required<ExpectedComponents> = { work: {}, tools: {} };
	for (const c of comps) {
		if (c.kind === 'work' && (c.component === 'x' || c.component === 'y'))
			out.work[c.register] = { ...out.work[c.register], [c.component]: c.value };
		else if (c.kind === 'tool') {
			const key = TOOL_COMPONENT_KEY[c.component as ToolComponent];
			out.tools[c.register] = { ...out.tools[c.register], [key]: c.value };
		}
	}
	return out;
}

/** Older values of every component ("G54|x" → values), not the current version: "stale". */
async function olderComponentValues(
	trx: Knex.Transaction,
	machine: MachineRecord,
	comps: CurrentComponent[]
): Promise<Record<string, number[]>> {
	if (comps.length === 0) return {};
	const rows = await trx('offset_component_versions')
		.where({ machine_id: machine.id, units: machine.units })
		.whereNotIn(
			'id',
			comps.map((c) => c.versionId)
		)
		.select('register', 'component', 'value');
	const out: Record<string, number[]> = {};
	for (const r of rows) (out[`${r.register}|${r.component}`] ??= []).push(Number(r.value));
	return out;
}

function pick(record: Record<string, number>, keys: string[]): Record<string, number> {
	const out: Record<string, number> = {};
	for (const k of keys) if (k in record) out[k] = record[k];
	return out;
}

/** The work offsets and H numbers a setup uses. */
export async function setupRegistersOf(
	trx: Knex.Transaction,
	setupId: number
): Promise<{ work: string[]; tools: string[] }> {
	const work = await trx('setup_fixtures as sf')
		.join('fixtures as f', 'f.id', 'sf.fixture_id')
		.where('sf.setup_id', setupId)
		.pluck('f.register');
	const tools = await trx('setup_tools as st')
		.join('tools as t', 't.id', 'st.tool_id')
		.where('st.setup_id', setupId)
		.pluck('t.h_number');
	return { work, tools: tools.map(String) };
}

async function setupNameMap(trx: Knex.Transaction, machineId: number) {
	const rows = await trx('setups').where({ machine_id: machineId }).select('id', 'name');
	return new Map(rows.map((r) => [String(r.id), String(r.name)]));
}
