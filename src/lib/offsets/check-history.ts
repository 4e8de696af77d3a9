/**
 * The history checks of one register: how the current value compares with the last recorded
 * one (typing slips and unexplained jumps) and how old it is (stale-age, stale-reference).
 */
import { makeFinding, type Finding, type FindingSubject, type TableFindingKind } from './findings';
import { formatWithUnits } from './format';
import type { Policy } from './policy';
import type { HistoryEntry } from './types';
import { describeSlip, nameSlip } from './slips';
import { fromMicro, toMicro, type Units } from './units';

const DAY_MS = 86_400_000;

/** Everything the history checks need about one register. */
export interface RegisterContext {
	subject: FindingSubject;
	/** "H3" or "G55" for messages. */
	label: string;
	section: 'work' | 'tools';
	current: number;
	history: HistoryEntry[];
	units: Units;
	resolution: number;
	policy: Policy;
	now: number;
	referenceEstablishedAt?: number;
	/** Whether re-establishing the reference can change this value (convention-dependent). */
	dependsOnReference: boolean;
}

/** Epoch milliseconds of a timestamp (already validated). */
export function toMillis(t: number | string): number {
	return typeof t === 'number' ? t : Date.parse(t);
}

export { isAdjacentTransposition, slipKind } from './slips';

const SLIP_TEXT: Record<Exclude<TableFindingKind, 'jump'>, string> = {
	'sign-flip':
		'has the opposite sign of its last recorded value with about the same size: a minus sign was probably added or dropped',
	'unit-slip':
		'is about 25.4 times larger or smaller than its last recorded value: it was probably typed in the wrong unit (inch vs mm)',
	'decimal-slip':
		'is about 10 times larger or smaller than its last recorded value: the decimal point was probably typed in the wrong place',
	'transposed-digits':
		'matches its last recorded value with two neighbouring digits swapped: probably a typing slip',
	sign: '',
	'out-of-travel': '',
	'stale-age': '',
	'stale-reference': '',
	'duplicate-register': '',
	unset: ''
};

/** Runs the history checks for one register. */
export function checkRegisterHistory(ctx: RegisterContext): Finding[] {
	const out: Finding[] = [];
	const entries = [...ctx.history].sort((a, b) => toMillis(a.at) - toMillis(b.at));
	if (entries.length === 0) return out;
	const fmt = (v: number) => formatWithUnits(v, ctx.units, ctx.resolution);
	const last = entries[entries.length - 1];
	// The newest record describes the current value when they agree; otherwise the current
	// value was typed at the control without being recorded, and the newest record is "before".
	const recorded = toMicro(last.value) === toMicro(ctx.current);
	const previous = recorded ? entries[entries.length - 2] : last;
	const changeRecorded = recorded && (last.toolChange === true || last.fixtureChange === true);
	const measuredAt = recorded ? toMillis(last.at) : undefined;
	const data = { value: ctx.current, ...(previous ? { previous: previous.value } : {}) };

	if (previous) {
		const named = nameSlip(ctx.current, previous.value, ctx.units, ctx.resolution, ctx.policy);
		const slip = named?.kind ?? null;
		const delta = Math.abs(toMicro(ctx.current) - toMicro(previous.value));
		if (slip) {
			const excuse = changeRecorded
				? ` A ${ctx.section === 'tools' ? 'tool change' : 'fixture change'} was recorded, so it may be genuine: confirm it before running.`
				: ` Re-measure ${ctx.label} or re-enter it from the reading before running.`;
			out.push(
				makeFinding(
					slip,
					changeRecorded ? 'caution' : 'stop',
					ctx.subject,
					`${ctx.label} is ${fmt(ctx.current)} (was ${fmt(previous.value)}) and ${SLIP_TEXT[slip]}: ${describeSlip(named!, ctx.units, ctx.resolution)}.${excuse}`,
					{ ...data, slip: named!.rule, corrected: named!.corrected }
				)
			);
		} else if (!changeRecorded && delta > toMicro(ctx.policy.jumpTolerance)) {
			out.push(
				makeFinding(
					'jump',
					'caution',
					ctx.subject,
					`${ctx.label} changed by ${fmt(fromMicro(delta))} since its last recorded value ${fmt(previous.value)}, more than the shop's ${fmt(ctx.policy.jumpTolerance)}, and no ${ctx.section === 'tools' ? 'tool' : 'fixture'} change was recorded. Re-measure it, or record the change if there was one.`,
					data
				)
			);
		}
	}

	if (measuredAt !== undefined) {
		const limitDays =
			ctx.section === 'tools' ? ctx.policy.toolMaxAgeDays : ctx.policy.workMaxAgeDays;
		const ageDays = (ctx.now - measuredAt) / DAY_MS;
		if (ageDays > limitDays) {
			out.push(
				makeFinding(
					'stale-age',
					'caution',
					ctx.subject,
					`${ctx.label} was last measured ${Math.floor(ageDays)} days ago, past the shop's limit of ${limitDays} days. Re-measure it before the next job.`,
					{ ...data, ageDays: Math.floor(ageDays), limitDays }
				)
			);
		}
		if (
			ctx.dependsOnReference &&
			ctx.referenceEstablishedAt !== undefined &&
			measuredAt < ctx.referenceEstablishedAt
		) {
			out.push(
				makeFinding(
					'stale-reference',
					'caution',
					ctx.subject,
					`${ctx.label} was measured before the machine's reference was last re-established, so it may be off by however much the reference moved. Re-measure it against the reference as it is now.`,
					data
				)
			);
		}
	}
	return out;
}
