import type { Knex } from 'knex';
import {
	classifyRegisters,
	findingTitle,
	WITHHELD_STATUSES,
	type Finding,
	type RegisterStatus
} from '$lib/offsets';
import { machineState, type MachineRecord, type MachineState } from './machine-state';

/** One register as everything that sends numbers toward a machine sees it. */
export interface GatedRegister {
	section: 'work' | 'tools';
	/** "G54" or the H number ("6"). */
	register: string;
	/** "G54" or "H6". */
	label: string;
	value: number | null;
	status: RegisterStatus;
	findings: { kind: string; title: string; severity: 'caution' | 'stop'; message: string }[];
	measuredAt: string | null;
	measuredBy: string | null;
	/** Saved over a Stop (the reading behind the value was an override). */
	overridden: boolean;
}

export interface MachineGate {
	state: MachineState;
	work: Record<string, GatedRegister>;
	tools: Record<string, GatedRegister>;
}

const brief = (f: Finding) => ({
	kind: f.kind,
	title: findingTitle(f.kind),
	severity: f.severity,
	message: f.message
});

/**
 * The gate for one machine: the engine's verdict on every register (one checkOffsets call, in
 * machineState), with when and by whom each current value was measured. Used by the load
 * programs, the setup page and sheet, the machine page and the offsets API.
 */
export async function machineGate(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now = new Date(),
	state?: MachineState
): Promise<MachineGate> {
	const s = state ?? (await machineState(trx, machine, now));
	const verdicts = classifyRegisters(s.checkInput, s.findings);
	const who = await trx('current_offsets as c')
		.join('offset_versions as o', 'o.id', 'c.offset_version_id')
		.leftJoin('readings as r', 'r.id', 'o.reading_id')
		.leftJoin('public.users as u', 'u.id', trx.raw('coalesce(r.taken_by, o.created_by)'))
		.where('c.machine_id', machine.id)
		.select(
			'c.register_kind',
			'c.register',
			'u.name',
			trx.raw('coalesce(cardinality(r.overridden_findings), 0) > 0 as overridden')
		);
	const byKey = new Map(who.map((w) => [`${w.register_kind}:${w.register}`, w]));
	const current = new Map(s.offsets.map((o) => [`${o.kind}:${o.register}`, o]));
	const row = (section: 'work' | 'tools', register: string): GatedRegister => {
		const kind = section === 'work' ? 'work' : 'tool';
		const o = current.get(`${kind}:${register}`);
		const w = byKey.get(`${kind}:${register}`);
		const v = (section === 'work' ? verdicts.work : verdicts.tools)[register];
		return {
			section,
			register,
			label: section === 'work' ? register : `H${register}`,
			value: o?.value ?? null,
			status: o ? (v?.status ?? 'ok') : 'unset',
			findings: (v?.findings ?? []).map(brief),
			measuredAt: o?.measuredAt ?? null,
			measuredBy: w?.name ?? null,
			overridden: Boolean(w?.overridden)
		};
	};
	const work: Record<string, GatedRegister> = {};
	const tools: Record<string, GatedRegister> = {};
	for (const r of new Set([...Object.keys(verdicts.work), ...Object.keys(s.table.work)]))
		work[r] = row('work', r);
	for (const h of new Set([...Object.keys(verdicts.tools), ...Object.keys(s.table.tools)]))
		tools[h] = row('tools', h);
	return { state: s, work, tools };
}

/** A register of a gate, or "not measured" when the gate has never seen it. */
export function gated(
	gate: MachineGate,
	section: 'work' | 'tools',
	register: string
): GatedRegister {
	return (
		(section === 'work' ? gate.work : gate.tools)[register] ?? {
			section,
			register,
			label: section === 'work' ? register : `H${register}`,
			value: null,
			status: 'unset',
			findings: [],
			measuredAt: null,
			measuredBy: null,
			overridden: false
		}
	);
}

/** True for what a load program leaves out unless a lead includes it: Stop and stale. */
export const isWithheld = (r: Pick<GatedRegister, 'status'>) =>
	WITHHELD_STATUSES.includes(r.status);

/** "STOP: Decimal point probably in the wrong place, saved over a Stop" — for comments and pages. */
export function gateReason(r: GatedRegister): string {
	const titles = [...new Set(r.findings.filter((f) => f.kind !== 'override').map((f) => f.title))];
	if (r.overridden) titles.push('saved over a Stop');
	return `${r.status.toUpperCase()}: ${titles.join(', ') || 'see the findings'}`;
}
