/**
 * The gate: one call that judges every register on its way to a machine (a load program, the
 * setup page and sheet, the API export). It runs checkOffsets once and gives each register of
 * the table one status, worst first:
 *   unset (not measured) > stop > stale (stale-age, stale-reference) > caution > ok.
 * A finding on a setup's fixture/tool pair (e.g. out-of-travel for G55 with H2) counts for both
 * registers of the pair: either of the two may be the wrong one.
 */
import { checkOffsets } from './check';
import { sortFindings, type Finding } from './findings';
import { canonicalH, canonicalRegister } from './registers';
import type { CheckInput } from './types';

export type RegisterStatus = 'ok' | 'caution' | 'stop' | 'stale' | 'unset';

/** Statuses a load program leaves out unless a lead includes them on purpose. */
export const WITHHELD_STATUSES: readonly RegisterStatus[] = ['stop', 'stale'];

export interface RegisterVerdict {
	status: RegisterStatus;
	/** The findings behind the status, stop first. */
	findings: Finding[];
}

export interface GateResult {
	/** Everything checkOffsets found (the same list the nightly check stores). */
	findings: Finding[];
	/** Per work register ("G54") and per H number ("3"). */
	work: Record<string, RegisterVerdict>;
	tools: Record<string, RegisterVerdict>;
}

/** The status of one register from its value and its findings. */
export function registerStatus(
	value: number | null | undefined,
	findings: Finding[]
): RegisterStatus {
	if (value === null || value === undefined || findings.some((f) => f.kind === 'unset'))
		return 'unset';
	if (findings.some((f) => f.severity === 'stop')) return 'stop';
	if (findings.some((f) => f.kind === 'stale-age' || f.kind === 'stale-reference')) return 'stale';
	if (findings.length > 0) return 'caution';
	return 'ok';
}

/** True when a finding is about work register `r` (canonical). */
export function concernsWork(f: Finding, r: string): boolean {
	const s = f.subject;
	return (
		(s.type === 'fixture' || s.type === 'setup') &&
		s.register !== undefined &&
		canonicalRegister(s.register) === r
	);
}

/** True when a finding is about H number `h` (canonical). */
export function concernsTool(f: Finding, h: string): boolean {
	const s = f.subject;
	return (s.type === 'tool' || s.type === 'setup') && s.h !== undefined && canonicalH(s.h) === h;
}

/**
 * Judges every register of `input.table` and every register the setups use (a used register
 * missing from the table is `unset`). The engine's own validation applies (OffsetInputError).
 */
export function gateOffsets(input: CheckInput): GateResult {
	const findings = checkOffsets(input);
	return { findings, ...classify(input, findings) };
}

/** The per-register verdicts for findings already worked out from `input`. */
export function classify(
	input: Pick<CheckInput, 'table' | 'setups' | 'used'>,
	findings: Finding[]
): Pick<GateResult, 'work' | 'tools'> {
	const work: Record<string, RegisterVerdict> = {};
	const tools: Record<string, RegisterVerdict> = {};
	const workKeys = new Set<string>();
	const toolKeys = new Set<string>();
	for (const k of Object.keys(input.table.work)) workKeys.add(canonicalRegister(k) ?? k);
	for (const k of Object.keys(input.table.tools)) toolKeys.add(canonicalH(k) ?? k);
	for (const s of input.setups ?? []) {
		for (const f of s.fixtures) workKeys.add(canonicalRegister(f.register) ?? f.register);
		for (const t of s.tools ?? []) toolKeys.add(canonicalH(t.h) ?? t.h);
	}
	for (const r of input.used?.work ?? []) workKeys.add(canonicalRegister(r) ?? r);
	for (const h of input.used?.tools ?? []) toolKeys.add(canonicalH(h) ?? h);
	const valueOf = (
		section: Record<string, number>,
		key: string,
		canon: (k: string) => string | null
	) => Object.entries(section).find(([k]) => (canon(k) ?? k) === key)?.[1];
	for (const r of workKeys) {
		const fs = sortFindings(findings.filter((f) => concernsWork(f, r)));
		work[r] = {
			status: registerStatus(valueOf(input.table.work, r, canonicalRegister), fs),
			findings: fs
		};
	}
	const master = input.table.masterTool;
	for (const h of toolKeys) {
		const fs = sortFindings(findings.filter((f) => concernsTool(f, h)));
		let value = valueOf(input.table.tools, h, canonicalH);
		// The master tool of a master-tool table is 0 by definition, recorded or not.
		if (value === undefined && input.table.convention === 'master-tool' && master === h) value = 0;
		tools[h] = { status: registerStatus(value, fs), findings: fs };
	}
	return { work, tools };
}
