/**
 * The findings a reading's preview shows: typing slips named from what was typed at the machine
 * (the engine's ./slips), then the engine's checks on the register, in the preview's brief form.
 */
import {
	blockHeightSlip,
	describeSlip,
	makeFinding,
	nameSlip,
	resolvePolicy,
	type Finding
} from '$lib/offsets';
import type { BriefFinding } from '$lib/reading-preview';
import type { MachineRecord } from '../offsets/machine-state';
import { fmtOf } from './input';

const brief = (f: Finding): BriefFinding => ({
	kind: f.kind,
	severity: f.severity,
	message: f.message
});

/**
 * Slips in what was typed at the machine, named with the value meant (./slips in the engine):
 * the machine Z against the last reading of the same tool or fixture, and the block height
 * against the offset it moves. A block slip that moves the offset past the shop's jump limit is
 * a Stop; a machine Z slip is a Stop unless a change was recorded.
 */
export function touchSlipFindings(
	machine: MachineRecord,
	subject: Finding['subject'],
	label: string,
	t: {
		machineZ: number;
		block: number;
		value: number;
		previous: number | null;
		previousZ: number | null;
		changed: boolean;
	}
): Finding[] {
	const policy = resolvePolicy(undefined, machine.units);
	const fmt = fmtOf(machine);
	const out: Finding[] = [];
	const block = blockHeightSlip({
		block: t.block,
		offset: t.value,
		previousOffset: t.previous,
		zTravel: machine.zTravel,
		units: machine.units,
		resolution: machine.resolution,
		policy
	});
	if (block) {
		out.push(
			makeFinding(
				block.kind,
				'stop',
				subject,
				`Block height ${fmt(t.block)} is ${describeSlip(block, machine.units, machine.resolution)}. ` +
					`It moves ${label} by ${fmt(Math.abs(block.moved))}${t.previous !== null ? `, more than the shop's jump limit of ${fmt(policy.jumpTolerance)}` : ''}; with ${fmt(block.corrected)} ${label} would be ${fmt(block.correctedOffset)}. Check the block and re-enter its height.`,
				{ field: 'blockHeight', slip: block.rule, corrected: block.corrected }
			)
		);
		return out;
	}
	if (t.previousZ !== null) {
		const z = nameSlip(t.machineZ, t.previousZ, machine.units, machine.resolution, policy);
		if (z) {
			out.push(
				makeFinding(
					z.kind,
					t.changed ? 'caution' : 'stop',
					subject,
					`Machine Z ${fmt(t.machineZ)} against the last reading ${fmt(t.previousZ)} is ${describeSlip(z, machine.units, machine.resolution)}. Read the control again and re-enter it.`,
					{ field: 'machineZ', slip: z.rule, corrected: z.corrected }
				)
			);
		}
	}
	return out;
}

/** Touch findings first; the engine's finding of the same kind on the register is then dropped. */
export function withTouchFindings(touch: Finding[], engine: BriefFinding[]): BriefFinding[] {
	const kinds = new Set(touch.map((f) => f.kind));
	return [...touch.map(brief), ...engine.filter((f) => !kinds.has(f.kind))].sort((a, b) =>
		a.severity === b.severity ? 0 : a.severity === 'stop' ? -1 : 1
	);
}

/** The engine's findings on one register (and the setups that use it), in brief. */
export function registerFindings(findings: Finding[], kind: 'tool' | 'work', register: string) {
	return findings
		.filter((f) =>
			kind === 'tool'
				? (f.subject.type === 'tool' || f.subject.type === 'setup') && f.subject.h === register
				: (f.subject.type === 'fixture' || f.subject.type === 'setup') &&
					f.subject.register === register &&
					!(f.subject.type === 'setup' && f.subject.h)
		)
		.map(brief);
}
