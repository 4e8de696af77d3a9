import type { Knex } from 'knex';
import type { Finding } from '$lib/offsets';
import { machineState, type MachineRecord } from './machine-state';

export type RowStatus = 'ok' | 'caution' | 'stop' | 'stale' | 'unset';

export interface ToolRow {
	id: number;
	t: number;
	h: number;
	description: string;
	holder: string;
	stickout: number | null;
	nominalLength: number | null;
	value: number | null;
	measuredAt: string | null;
	status: RowStatus;
	findings: Pick<Finding, 'kind' | 'severity' | 'message'>[];
}

export interface FixtureRow {
	id: number;
	register: string;
	name: string;
	description: string;
	value: number | null;
	measuredAt: string | null;
	status: RowStatus;
	findings: Pick<Finding, 'kind' | 'severity' | 'message'>[];
}

/** Worst first: stop, then stale, then caution. */
export function statusOf(value: number | null, findings: Finding[]): RowStatus {
	if (value === null) return 'unset';
	if (findings.some((f) => f.severity === 'stop')) return 'stop';
	if (findings.some((f) => f.kind.startsWith('stale-'))) return 'stale';
	if (findings.length > 0) return 'caution';
	return 'ok';
}

const brief = (f: Finding) => ({ kind: f.kind, severity: f.severity, message: f.message });

/** A machine's tools and fixtures with their current offsets, status and findings. */
export async function machineOverview(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now = new Date()
) {
	const state = await machineState(trx, machine, now);
	const tools = await trx('tools')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.orderBy('t_number');
	const fixtures = await trx('fixtures')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.orderBy('register');
	const current = new Map(state.offsets.map((o) => [`${o.kind}:${o.register}`, o]));
	const toolFindings = (h: number) =>
		state.findings.filter(
			(f) =>
				(f.subject.type === 'tool' && f.subject.h === String(h)) ||
				(f.subject.type === 'setup' && f.subject.h === String(h))
		);
	const fixtureFindings = (register: string) =>
		state.findings.filter((f) => f.subject.type === 'fixture' && f.subject.register === register);

	const toolRows: ToolRow[] = tools.map((t) => {
		const o = current.get(`tool:${t.h_number}`);
		const fs = toolFindings(t.h_number);
		return {
			id: Number(t.id),
			t: t.t_number,
			h: t.h_number,
			description: t.description,
			holder: t.holder,
			stickout: t.stickout === null ? null : Number(t.stickout),
			nominalLength: t.nominal_length === null ? null : Number(t.nominal_length),
			value: o?.value ?? null,
			measuredAt: o?.measuredAt ?? null,
			status: statusOf(o?.value ?? null, fs),
			findings: fs.map(brief)
		};
	});
	const fixtureRows: FixtureRow[] = fixtures.map((f) => {
		const o = current.get(`work:${f.register}`);
		const fs = fixtureFindings(f.register);
		return {
			id: Number(f.id),
			register: f.register,
			name: f.name,
			description: f.description,
			value: o?.value ?? null,
			measuredAt: o?.measuredAt ?? null,
			status: statusOf(o?.value ?? null, fs),
			findings: fs.map(brief)
		};
	});
	const machineFindings = state.findings
		.filter((f) => f.subject.type === 'machine' || f.subject.type === 'setup')
		.map(brief);
	return { state, toolRows, fixtureRows, machineFindings };
}
