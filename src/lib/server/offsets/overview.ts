import type { Knex } from 'knex';
import {
	concernsTool,
	findingTitle,
	concernsWork,
	registerStatus,
	type Finding
} from '$lib/offsets';
import type { FixtureRow, ToolRow } from '../db/tables';
import { machineState, type MachineRecord } from './machine-state';

export type RowStatus = 'ok' | 'caution' | 'stop' | 'stale' | 'unset';

/** One tool of the machine page's rack: its current offset, status and findings. */
export interface ToolOverview {
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

/** One work offset (fixture) of the machine page: its current offset, status and findings. */
export interface FixtureOverview {
	id: number;
	register: string;
	name: string;
	description: string;
	value: number | null;
	measuredAt: string | null;
	status: RowStatus;
	findings: Pick<Finding, 'kind' | 'severity' | 'message'>[];
}

/** Worst first: not measured, stop, stale, caution — the engine's gate (registerStatus). */
export function statusOf(value: number | null, findings: Finding[]): RowStatus {
	return registerStatus(value, findings);
}

const brief = (f: Finding) => ({
	kind: f.kind,
	title: findingTitle(f.kind),
	severity: f.severity,
	message: f.message
});

/** A machine's tools and fixtures with their current offsets, status and findings. */
export async function machineOverview(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now = new Date()
) {
	const state = await machineState(trx, machine, now);
	const tools = await trx<ToolRow>('tools')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.orderBy('t_number');
	const fixtures = await trx<FixtureRow>('fixtures')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.orderBy('register');
	const current = new Map(state.offsets.map((o) => [`${o.kind}:${o.register}`, o]));
	// One engine verdict per register (the gate), the same the load programs and setups use.
	const toolFindings = (h: number) => state.findings.filter((f) => concernsTool(f, String(h)));
	const fixtureFindings = (register: string) =>
		state.findings.filter((f) => concernsWork(f, register));

	const toolRows: ToolOverview[] = tools.map((t) => {
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
	const fixtureRows: FixtureOverview[] = fixtures.map((f) => {
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
