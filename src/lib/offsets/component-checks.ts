/**
 * Checks for the offset components beside Z (issue 20): a work offset's X or Y from an edge
 * reading, and the wear registers. The same rules as Z where they carry over (slips against the
 * last value, a jump beyond the shop's tolerance) plus two of their own:
 *
 * - `approach-side`: the edge was touched from the other side than the last reading of the same
 *   register and axis and the result moved by more than the jump tolerance. Touched from the
 *   wrong side (or the side entered wrong) an edge comes out one probe diameter off, since the
 *   radius is added on one side and subtracted on the other (common shop practice).
 * - `wear-limit`: a wear value beyond the shop's limit is a Stop; the correction belongs in the
 *   geometry after re-measuring (our default limit 0.0100 in / 0.25 mm, shop policy).
 */
import { approachWords, type ApproachSide, type EdgeAxis } from './edges';
import { makeFinding, type Finding, type FindingSubject } from './findings';
import { formatWithUnits } from './format';
import { nameSlip, describeSlip } from './slips';
import type { Policy } from './policy';
import { fromMicro, resolutionFor, toMicro, type Units } from './units';
import { DEFAULT_WEAR_LIMIT } from './wear';

/** The last recorded X or Y of the same register, with how it was found. */
export interface PreviousEdge {
	value: number;
	/** The approach side of a single-edge reading; absent for a centre (two sides). */
	side?: ApproachSide;
}

const SLIP_TEXT = {
	'sign-flip': 'looks like the minus sign was added or dropped',
	'unit-slip': 'looks like a value typed in the other unit',
	'decimal-slip': 'looks like the decimal point moved',
	'transposed-digits': 'looks like two digits were swapped'
} as const;

/**
 * Findings on a new X or Y of a work offset against its last recorded value.
 * Slips are Stop (as for Z, NIST-free: common shop practice); a side change that moved the
 * value is Stop; an unexplained jump is Caution.
 */
export function checkEdgeValue(input: {
	units: Units;
	resolution?: number;
	policy: Pick<Policy, 'jumpTolerance' | 'minSlipMagnitude' | 'slipTolerance'>;
	register: string;
	axis: EdgeAxis;
	value: number;
	side?: ApproachSide;
	probeDiameter: number;
	previous: PreviousEdge | null;
}): Finding[] {
	const { units, policy, register, axis, value, previous } = input;
	const resolution = resolutionFor(units, input.resolution);
	const fmt = (v: number) => formatWithUnits(v, units, resolution);
	const subject: FindingSubject = { type: 'fixture', register: `${register} ${axis}` };
	const label = `${register} ${axis}`;
	if (!previous) return [];
	const out: Finding[] = [];
	const delta = Math.abs(toMicro(value) - toMicro(previous.value));
	const data = { value, previous: previous.value };
	const named = nameSlip(value, previous.value, units, resolution, policy);
	if (named) {
		out.push(
			makeFinding(
				named.kind,
				'stop',
				subject,
				`${label} is ${fmt(value)} (was ${fmt(previous.value)}) and ${SLIP_TEXT[named.kind as keyof typeof SLIP_TEXT] ?? 'looks like a slip'}: ${describeSlip(named, units, resolution)}. Re-measure the edge or check the reading before running.`,
				{ ...data, slip: named.rule, corrected: named.corrected }
			)
		);
		return out;
	}
	if (delta <= toMicro(policy.jumpTolerance)) return out;
	if (input.side && previous.side && input.side !== previous.side) {
		const offByDiameter =
			Math.abs(delta - toMicro(input.probeDiameter)) <= toMicro(policy.jumpTolerance);
		out.push(
			makeFinding(
				'approach-side',
				'stop',
				subject,
				`${label} was touched ${approachWords(axis, input.side)}, the last reading ${approachWords(axis, previous.side)}, and it moved ${fmt(fromMicro(delta))}${offByDiameter ? ` — about one probe diameter (${fmt(input.probeDiameter)})` : ''}. Check which side the probe came from and record it again.`,
				{ ...data, probeDiameter: input.probeDiameter }
			)
		);
		return out;
	}
	out.push(
		makeFinding(
			'jump',
			'caution',
			subject,
			`${label} changed by ${fmt(fromMicro(delta))} since its last recorded value ${fmt(previous.value)}, more than the shop's ${fmt(policy.jumpTolerance)}. Re-measure it, or go on if the fixture or part was moved.`,
			data
		)
	);
	return out;
}

/** A wear value beyond the shop's limit: Stop, "move it into geometry after re-measuring". */
export function checkWearValue(input: {
	units: Units;
	resolution?: number;
	h: string;
	component: 'length-wear' | 'radius-wear';
	value: number;
	limit?: number;
}): Finding[] {
	const limit = input.limit ?? DEFAULT_WEAR_LIMIT[input.units];
	if (Math.abs(toMicro(input.value)) <= toMicro(limit)) return [];
	const fmt = (v: number) => formatWithUnits(v, input.units, input.resolution);
	const what = input.component === 'length-wear' ? 'length wear' : 'radius wear';
	return [
		makeFinding(
			'wear-limit',
			'stop',
			{ type: 'tool', h: `${input.h} ${what}` },
			`H${input.h} ${what} ${fmt(input.value)} is beyond the shop's limit of ${fmt(limit)}. Wear stays small: re-measure the tool and move the correction into the geometry.`,
			{ value: input.value, limit }
		)
	];
}
