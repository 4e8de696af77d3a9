/**
 * Validating and normalising an OffsetTable and a machine's travel: canonical register keys
 * ("g54.1p03" → "G54.1 P3"), canonical H numbers ("H07" → "7"), clashes refused.
 */
import { OffsetInputError, type OffsetIssue } from './errors';
import { canonicalH, canonicalRegister, sortH, sortRegisters } from './registers';
import { machineSchema, offsetTableSchema } from './schemas';
import type { Machine, OffsetTable } from './types';
import { parseInput } from './validate';

/** Two keys that name the same register after normalising ("G54" and "g54"). */
export interface KeyClash {
	section: 'work' | 'tools';
	canonical: string;
	keys: string[];
}

/** Keys of a record grouped by canonical form; groups of two or more are clashes. */
export function findClashes(table: Pick<OffsetTable, 'work' | 'tools'>): KeyClash[] {
	const clashes: KeyClash[] = [];
	for (const section of ['work', 'tools'] as const) {
		const groups = new Map<string, string[]>();
		for (const key of Object.keys(table[section])) {
			const c = section === 'work' ? canonicalRegister(key) : canonicalH(key);
			if (c === null) continue;
			groups.set(c, [...(groups.get(c) ?? []), key]);
		}
		for (const [canonical, keys] of groups)
			if (keys.length > 1) clashes.push({ section, canonical, keys });
	}
	return clashes;
}

/**
 * Validates a table and returns it with canonical keys in control order. With
 * `allowClashes`, clashing keys keep the first value (checkOffsets reports them instead).
 */
export function normalizeTable(input: unknown, root = 'table', allowClashes = false): OffsetTable {
	const t = parseInput(offsetTableSchema, input, root);
	const clashes = findClashes(t);
	if (clashes.length > 0 && !allowClashes) {
		const issues: OffsetIssue[] = clashes.map((c) => ({
			field: `${root}.${c.section}.${c.keys[1]}`,
			value: c.keys[1],
			message: `names the same ${c.section === 'work' ? 'work offset' : 'H number'} as "${c.keys[0]}" (${c.canonical}); keep one entry`
		}));
		throw new OffsetInputError(issues);
	}
	const work: Record<string, number> = {};
	const byRegister = new Map<string, number>();
	for (const [k, v] of Object.entries(t.work)) {
		const c = canonicalRegister(k)!;
		if (!byRegister.has(c)) byRegister.set(c, v);
	}
	for (const r of sortRegisters(byRegister.keys())) work[r] = byRegister.get(r)!;
	const byH = new Map<string, number>();
	for (const [k, v] of Object.entries(t.tools)) {
		const c = canonicalH(k)!;
		if (!byH.has(c)) byH.set(c, v);
	}
	const tools: Record<string, number> = {};
	for (const h of sortH(byH.keys())) tools[h] = byH.get(h)!;
	const out: OffsetTable = { convention: t.convention, units: t.units, work, tools };
	if (t.masterTool !== undefined) out.masterTool = canonicalH(t.masterTool)!;
	return out;
}

/** Machine Z limits: a travel length means [−travel, 0] (Z homes at the top — common shop practice). */
export function travelLimits(machine: Pick<Machine, 'zTravel'>): { min: number; max: number } {
	return typeof machine.zTravel === 'number' ? { min: -machine.zTravel, max: 0 } : machine.zTravel;
}

/** Validates a machine. */
export function parseMachine(input: unknown, root = 'machine'): Machine {
	return parseInput(machineSchema, input, root);
}

/** A machine's name for messages: its name, else its id, else "the machine". */
export function machineName(machine: Pick<Machine, 'name' | 'id'>): string {
	return machine.name ?? machine.id ?? 'the machine';
}
