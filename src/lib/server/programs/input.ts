import type { Knex } from 'knex';
import {
	isOffsetInputError,
	programSetupSchema,
	REGISTER_STATES,
	type ProgramSetup,
	type RegisterState
} from '$lib/offsets';
import { engineMachine, machineState } from '../offsets/machine-state';
import { engineSetupFor, type SetupDetail } from '../setups/queries';

/**
 * What a check was run against, stored with it (program_checks.input): the engine's setup and,
 * for the summary and the report, when each register was last measured.
 */
export interface CheckInput {
	programSetup: ProgramSetup;
	setupName: string;
	machineName: string;
	/** Register → ISO time of its newest value on the machine (work: "G54", tools: H "1"). */
	measuredAt: { work: Record<string, string>; tools: Record<string, string> };
	/** Tool number → description, for the summary. */
	toolNames: Record<string, string>;
}

const isState = (k: string): k is RegisterState =>
	(REGISTER_STATES as readonly string[]).includes(k);

/**
 * The program check's input for a setup as it stands now: the machine's whole current table
 * (a program may name a register the setup does not use: the engine says so), the setup's
 * fixtures and obstacles, every rack tool's H register, and the registers the offset checks
 * find stale or never measured. Refuses, with reasons, a setup that cannot be checked against.
 */
export async function programSetupFor(
	trx: Knex.Transaction,
	setup: SetupDetail,
	now = new Date()
): Promise<{ ok: true; input: CheckInput } | { ok: false; reasons: string[] }> {
	const machine = setup.machine;
	const engineSetup = engineSetupFor(
		machine,
		setup.clearanceMargin,
		setup.fixtures,
		setup.geometry,
		String(setup.id)
	);
	if (!engineSetup) {
		const reasons = setup.clearance.problems.length
			? setup.clearance.problems
			: ['This setup has no fixture yet: add its fixtures first.'];
		return { ok: false, reasons };
	}
	engineSetup.name = setup.name;
	engineSetup.tools = setup.tools.map((t) => ({ h: String(t.h) }));

	const state = await machineState(trx, machine, now);
	const work: Record<string, RegisterState[]> = {};
	const tools: Record<string, RegisterState[]> = {};
	const add = (bucket: Record<string, RegisterState[]>, key: string, s: RegisterState) => {
		const list = (bucket[key] ??= []);
		if (!list.includes(s)) list.push(s);
	};
	for (const f of state.findings) {
		if (!isState(f.kind)) continue;
		const s = f.subject;
		if (s.type === 'fixture') add(work, s.register, f.kind);
		else if (s.type === 'tool') add(tools, s.h, f.kind);
		else if (s.type === 'setup') {
			if (s.register) add(work, s.register, f.kind);
			if (s.h) add(tools, s.h, f.kind);
		}
	}
	for (const f of setup.fixtures) if (f.workOffset === null) add(work, f.register, 'unset');
	for (const t of setup.tools) if (t.offset === null) add(tools, String(t.h), 'unset');

	const rack = await trx('tools')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.select('t_number', 'h_number', 'description');
	const toolRegisters: Record<string, string> = {};
	const toolNames: Record<string, string> = {};
	for (const t of rack) {
		toolRegisters[String(t.t_number)] = String(t.h_number);
		toolNames[String(t.t_number)] = t.description;
	}

	const programSetup: ProgramSetup = {
		machine: engineMachine(machine),
		table: state.table,
		setup: engineSetup,
		...(setup.geometry.referenceGaugeLineZ !== null || setup.geometry.masterTouchZ !== null
			? {
					geometry: {
						...(setup.geometry.referenceGaugeLineZ !== null
							? { referenceGaugeLineZ: setup.geometry.referenceGaugeLineZ }
							: {}),
						...(setup.geometry.masterTouchZ !== null
							? { masterTouchZ: setup.geometry.masterTouchZ }
							: {})
					}
				}
			: {}),
		toolRegisters,
		registerStatus: { work, tools },
		// Dialect from the machine's control style (the engine's default); the picture of the
		// tip's heights is kept with the result.
		profile: true
	};
	const parsed = programSetupSchema.safeParse(programSetup);
	if (!parsed.success) {
		return {
			ok: false,
			reasons: parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`)
		};
	}
	const measuredAt: CheckInput['measuredAt'] = { work: {}, tools: {} };
	for (const o of state.offsets)
		(o.kind === 'work' ? measuredAt.work : measuredAt.tools)[o.register] = o.measuredAt;
	return {
		ok: true,
		input: {
			programSetup,
			setupName: setup.name,
			machineName: machine.name,
			measuredAt,
			toolNames
		}
	};
}

/** An OffsetInputError's issues as sentences; anything else is rethrown. */
export function setupProblems(e: unknown): string[] {
	if (!isOffsetInputError(e)) throw e;
	return e.issues.map((i) => `${i.field} ${i.message}`);
}
