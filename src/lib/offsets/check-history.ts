/**
 * The history checks of one register: how the current value compares with the last recorded
 * one (typing slips and unexplained jumps) and how old it is (stale-age, stale-reference).
 */
import { makeFinding, type Finding, type FindingSubject, type TableFindingKind } from './findings';
import { formatLength, formatWithUnits } from './format';
import type { Policy } from './policy';
import type { HistoryEntry } from './types';
import { fromMicro, MM_PER_INCH, toMicro, type Units } from './units';

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

function near(ratio: number, target: number, tolerance: number): boolean {
	return Math.abs(ratio - target) <= target * tolerance;
}

/** Digits of |v| at the resolution with the point removed, e.g. 15.2345 → "152345". */
function digitsOf(v: number, units: Units, resolution: number): string {
	return formatLength(Math.abs(v), units, resolution).replace('.', '');
}

/** True when a and b differ only by two neighbouring digits swapped. */
export function isAdjacentTransposition(a: string, b: string): boolean {
	if (a.length !== b.length || a === b) return false;
	const diff: number[] = [];
	for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) diff.push(i);
	return (
		diff.length === 2 &&
		diff[1] === diff[0] + 1 &&
		a[diff[0]] === b[diff[1]] &&
		a[diff[1]] === b[diff[0]]
	);
}

/** Which typing slip turns `previous` into `current`, if any. */
export function slipKind(
	current: number,
	previous: number,
	units: Units,
	resolution: number,
	policy: Policy
): Exclude<TableFindingKind, 'jump'> | null {
	const c = toMicro(current);
	const p = toMicro(previous);
	if (c === p || c === 0 || p === 0) return null;
	const floor = toMicro(policy.minSlipMagnitude);
	if (Math.abs(p) < floor && Math.abs(c) < floor) return null;
	const tol = policy.slipTolerance;
	if (
		Math.sign(c) !== Math.sign(p) &&
		Math.abs(Math.abs(c) - Math.abs(p)) <= toMicro(policy.jumpTolerance)
	) {
		return 'sign-flip';
	}
	const ratio = Math.abs(c) / Math.abs(p);
	if (near(ratio, MM_PER_INCH, tol) || near(ratio, 1 / MM_PER_INCH, tol)) return 'unit-slip';
	if (near(ratio, 10, tol) || near(ratio, 0.1, tol)) return 'decimal-slip';
	if (
		Math.sign(c) === Math.sign(p) &&
		isAdjacentTransposition(
			digitsOf(current, units, resolution),
			digitsOf(previous, units, resolution)
		)
	) {
		return 'transposed-digits';
	}
	return null;
}

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
		const slip = slipKind(ctx.current, previous.value, ctx.units, ctx.resolution, ctx.policy);
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
					`${ctx.label} is ${fmt(ctx.current)} (was ${fmt(previous.value)}) and ${SLIP_TEXT[slip]}.${excuse}`,
					data
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
