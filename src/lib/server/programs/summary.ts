import {
	FINDING_TITLE,
	type Finding,
	type ProgramCheckResult,
	type RegisterState
} from '$lib/offsets';
import type { CheckInput } from './input';

/** How fresh a register's value is, as the badges say it. */
export type Freshness = 'ok' | 'stale' | 'unset' | 'unknown';

export interface WorkOffsetRow {
	register: string;
	value: number | null;
	measuredAt: string | null;
	freshness: Freshness;
	/** Lowest safe retract Z in this fixture's coordinates; null when not a fixture of the setup. */
	clearance: number | null;
	states: RegisterState[];
}

export interface ToolRow {
	t: string;
	h: string;
	description: string;
	value: number | null;
	measuredAt: string | null;
	freshness: Freshness;
	states: RegisterState[];
	/** Lowest and highest tip height above the reference over the program's moves. */
	tipZ: { min: number; max: number } | null;
}

/** The result page's and the report's summary of a check, from what the check stored. */
export interface CheckSummary {
	units: { machine: 'inch' | 'mm'; program: 'inch' | 'mm' | 'mixed' | null };
	resolution: number;
	lines: number;
	moves: number;
	work: WorkOffsetRow[];
	tools: ToolRow[];
	clearanceHeight: number;
	clearancePlanes: Record<string, number>;
	stops: number;
	cautions: number;
	suppressed: number;
	/** The dialect the check used, its plain name, and where it came from. */
	dialect: { code: 'iso' | 'rs274ngc'; label: string; from: 'chosen' | 'machine' | 'default' };
	/** [from, until] line spans whose heights the check could not follow (until null: the end). */
	unknownSpans: [number, number | null][];
}

const list = (s: RegisterState | RegisterState[] | undefined): RegisterState[] =>
	s === undefined ? [] : Array.isArray(s) ? s : [s];

function freshness(value: number | null, states: RegisterState[]): Freshness {
	if (states.includes('unset') || value === null) return 'unset';
	if (states.length > 0) return 'stale';
	return 'ok';
}

export function summarize(input: CheckInput, result: ProgramCheckResult): CheckSummary {
	const ps = input.programSetup;
	const stats = result.stats;
	const table = ps.table;
	const status = ps.registerStatus ?? {};
	const work = stats.workOffsets.map((register) => {
		const value = table.work[register] ?? null;
		const states = list(status.work?.[register]);
		return {
			register,
			value,
			measuredAt: input.measuredAt.work[register] ?? null,
			freshness: freshness(value, states),
			clearance: stats.clearancePlanes[register] ?? null,
			states
		};
	});
	const hFor = (t: string) => ps.toolRegisters?.[t] ?? t;
	const tools = stats.tools.map((t) => {
		const h = hFor(t);
		const value = table.tools[h] ?? null;
		const states = list(status.tools?.[h]);
		return {
			t,
			h,
			description: input.toolNames[t] ?? '',
			value,
			measuredAt: input.measuredAt.tools[h] ?? null,
			freshness: freshness(value, states),
			states,
			tipZ: stats.tipZRange[t] ?? null
		};
	});
	const kept = result.findings.filter((f) => f.severity === 'stop').length;
	const counts = stats.severityCounts ?? {
		stop: kept,
		caution: result.findings.length - kept
	};
	const code = stats.dialect ?? ps.dialect ?? ps.machine.controlStyle ?? 'rs274ngc';
	return {
		units: stats.units,
		resolution: ps.machine.resolution ?? (ps.machine.units === 'inch' ? 0.0001 : 0.001),
		lines: stats.lines,
		moves: stats.moves,
		work,
		tools,
		clearanceHeight: stats.clearanceHeight,
		clearancePlanes: stats.clearancePlanes,
		stops: counts.stop,
		cautions: counts.caution,
		suppressed: stats.suppressed,
		dialect: {
			code,
			label: code === 'iso' ? 'ISO-style' : 'RS274NGC-style',
			from: stats.dialectFrom ?? (ps.machine.controlStyle ? 'machine' : 'default')
		},
		unknownSpans: stats.unknownSpans ?? []
	};
}

/** The program line a finding is about (every program finding has one). */
export function findingLine(f: Finding): number | null {
	return f.subject.type === 'program-line' ? f.subject.line : null;
}

/** Plain titles for the kinds: the one title table (src/lib/offsets/finding-titles.ts). */
export const KIND_LABEL: Readonly<Record<string, string>> = FINDING_TITLE;
