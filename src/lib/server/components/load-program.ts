/**
 * The components beside Z for a load program (issue 20): current X/Y, radius geometry and wear,
 * and which of them the gate withholds, the same way as Z: a value saved over a Stop
 * (override), a wear beyond the shop's limit, or an X/Y older than the shop's work-offset age
 * limit stays out unless a lead includes flagged registers on purpose.
 */
import type { Knex } from 'knex';
import { TOOL_COMPONENT_KEY, type ToolComponent } from '$lib/schemas/components';
import { resolvePolicy, wearBeyondLimit, type LoadProgramOptions } from '$lib/offsets';
import type { MachineRecord } from '../offsets/machine-state';
import { shopPolicy } from '../shops/settings';
import { cutterRegisterOf } from './store';
import { wearLimitFor } from './tool-registers';

export interface FlaggedComponent {
	section: 'work' | 'tools';
	register: string;
	component: 'x' | 'y' | 'radius' | 'length-wear' | 'radius-wear';
	reason: string;
}

export interface ProgramComponents {
	values: NonNullable<LoadProgramOptions['components']>;
	flagged: FlaggedComponent[];
}

const DAY_MS = 86_400_000;

export async function programComponents(
	trx: Knex.Transaction,
	machine: MachineRecord,
	now = new Date()
): Promise<ProgramComponents> {
	const [rows, cutterRegister, policyInput] = await Promise.all([
		trx('current_offset_components as c')
			.join('offset_component_versions as v', 'v.id', 'c.version_id')
			.where('c.machine_id', machine.id)
			.select(
				'c.register_kind',
				'c.register',
				'c.component',
				'c.value',
				'c.created_at',
				'v.override_reason'
			),
		cutterRegisterOf(trx, machine.id),
		shopPolicy(trx)
	]);
	const policy = resolvePolicy(policyInput, machine.units);
	const values: ProgramComponents['values'] = { work: {}, tools: {}, cutterRegister };
	const flagged: FlaggedComponent[] = [];
	const limit = await wearLimitFor(trx, machine);
	for (const r of rows) {
		const value = Number(r.value);
		const section = r.register_kind === 'work' ? 'work' : 'tools';
		const flag = (reason: string) =>
			flagged.push({ section, register: r.register, component: r.component, reason });
		if (r.override_reason) flag('SAVED OVER A STOP');
		if (section === 'work') {
			values.work![r.register] = { ...values.work![r.register], [r.component]: value };
			const age = (now.getTime() - new Date(r.created_at).getTime()) / DAY_MS;
			if (age > policy.workMaxAgeDays)
				flag(`${r.component.toUpperCase()} OLDER THAN THE SHOP LIMIT`);
		} else {
			const key = TOOL_COMPONENT_KEY[r.component as ToolComponent];
			values.tools![r.register] = { ...values.tools![r.register], [key]: value };
			if (r.component !== 'radius' && wearBeyondLimit(value, machine.units, limit))
				flag('WEAR BEYOND THE SHOP LIMIT - MOVE IT INTO GEOMETRY AFTER RE-MEASURING');
		}
	}
	return { values, flagged };
}
