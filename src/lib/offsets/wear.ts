/**
 * Wear registers: small corrections kept beside each geometry register, and the wear change a
 * measured part calls for.
 *
 * Sign rules, the same on both control styles Datumkeep writes for:
 * - Length: with G43 the length offset is ADDED to the programmed Z (NIST RS274NGC v3
 *   §3.5.11; the ISO-style controls' G43 "+ direction" does the same, from memory), and the
 *   control uses geometry + wear (ISO-style mill manual §1.2.10: L10 geometry, L11 wear,
 *   SOURCES.md 3). A smaller (more negative) effective length puts the tip LOWER for the same
 *   program: a floor cut too shallow needs negative length wear. (G44 subtracts and reverses
 *   this; Datumkeep's load programs and checks assume G43.)
 * - Radius/diameter: with cutter compensation (G41/G42 D_) the control offsets the path by the
 *   effective radius, geometry + wear (NIST RS274NGC v3, cutter radius compensation, which reads
 *   the tool table's diameter — from memory, not in SOURCES.md; ISO-style L12/L13 geometry and
 *   wear, SOURCES.md 3). A smaller effective radius brings the cutter closer to
 *   the work, so it removes more: an outside size left too big, or an inside size left too
 *   small, needs negative radius wear of half the size error (both sides cut). A register kept
 *   as a diameter takes the whole size error (common shop practice).
 *
 * These only act when the program uses G43 with that H and G41/G42 with that D: a program
 * posted with the path already offset by the CAM system ignores radius registers (common shop
 * practice) — the proposal says so.
 */
import { OffsetInputError } from './errors';
import {
	fromMicro,
	resolutionFor,
	roundToResolution,
	toMicro,
	toUnits,
	UNIT_LABEL,
	type Units
} from './units';

/** Which register family a wear value belongs to. */
export type WearRegister = 'length' | 'radius' | 'diameter';

/**
 * The measured feature:
 * - `depth`: a floor cut with the tool's end, measured down from the top (pocket, step, slot
 *   depth);
 * - `outside`: a size across two outside walls cut by the tool's side (boss diameter, width
 *   over flats);
 * - `inside`: a size across two inside walls cut by the tool's side (bore, slot or pocket
 *   width).
 */
export type MeasuredFeature = 'depth' | 'outside' | 'inside';
export const MEASURED_FEATURES = ['depth', 'outside', 'inside'] as const;

/** Whether a machine keeps its cutter registers as radius or diameter (a machine setting). */
export type CutterRegisterMode = 'radius' | 'diameter';

/**
 * The largest wear a shop lets stand before the geometry is re-measured. Our default, shop
 * policy (no published number, SOURCES.md 14): 0.0100 in / 0.25 mm — wear is a few thousandths
 * by nature, more means the tool or its geometry changed.
 */
export const DEFAULT_WEAR_LIMIT: Readonly<Record<Units, number>> = { inch: 0.01, mm: 0.25 };

/**
 * The limits a shop may set, per unit (our choice, shop policy): from one least increment
 * (0.0001 in / 0.001 mm, M. Lynch, SOURCES.md 5) to 0.1 in / 2.54 mm — wear beyond that is a
 * different tool, not wear.
 */
export const WEAR_LIMIT_RANGE: Readonly<Record<Units, readonly [number, number]>> = {
	inch: [0.0001, 0.1],
	mm: [0.001, 2.54]
};

/**
 * The shop's wear limit in `units`. Shops keep it in one unit, millimetres (`limitMm`); null or
 * undefined means our default for those units (0.0100 in / 0.25 mm). Converted exactly (1 in =
 * 25.4 mm, NIST SP 811) to the micro-unit: a limit is compared, never written to a control.
 */
export function wearLimitIn(units: Units, limitMm?: number | null): number {
	if (limitMm === null || limitMm === undefined) return DEFAULT_WEAR_LIMIT[units];
	const mm = finite('wearLimitMm', limitMm);
	if (mm <= 0) throw OffsetInputError.of('wearLimitMm', mm, 'must be greater than zero');
	// To the micro-unit the engine sums in (./units.ts): 0.25 mm → 0.009843 in.
	return units === 'mm' ? mm : toUnits(mm, 'mm', 'inch', 0.000001);
}

/** What a measured part asks of one wear register. */
export interface WearProposal {
	register: WearRegister;
	/** measured − nominal, in the part's units (positive: larger than drawn). */
	sizeError: number;
	/** The change to add to the current wear. */
	change: number;
	/** Current wear + change. */
	newWear: number;
	/** |newWear| beyond the shop's limit: a Stop, the geometry must be re-measured instead. */
	beyondLimit: boolean;
	/** The reasoning in a machinist's words, with the sign worked out. */
	explanation: string;
	/** Cautions to show with it. */
	cautions: string[];
}

const FEATURE_WORDS: Record<MeasuredFeature, { noun: string; small: string; big: string }> = {
	depth: { noun: 'floor', small: 'shallow', big: 'deep' },
	outside: { noun: 'outside size', small: 'small', big: 'big' },
	inside: { noun: 'inside size', small: 'small', big: 'big' }
};

function finite(field: string, value: unknown): number {
	if (typeof value !== 'number' || !Number.isFinite(value)) {
		throw OffsetInputError.of(field, value, 'must be a finite number');
	}
	return value;
}

/**
 * The wear change a measured feature calls for, with its sign in words.
 * @example proposeWear({ units: 'inch', feature: 'depth', nominal: 0.5, measured: 0.498 })
 *   // change −0.002: "the floor is 0.0020 in shallow: the tool must reach 0.0020 in lower"
 * @throws OffsetInputError for non-numbers, a size ≤ 0, an error larger than any wear
 */
export function proposeWear(input: {
	units: Units;
	feature: MeasuredFeature;
	nominal: number;
	measured: number;
	currentWear?: number;
	cutterRegister?: CutterRegisterMode;
	wearLimit?: number;
	resolution?: number;
}): WearProposal {
	const { units, feature } = input;
	if (!MEASURED_FEATURES.includes(feature)) {
		throw OffsetInputError.of('feature', feature, 'must be "depth", "outside" or "inside"');
	}
	const nominal = finite('nominal', input.nominal);
	const measured = finite('measured', input.measured);
	if (nominal <= 0) throw OffsetInputError.of('nominal', nominal, 'must be greater than zero');
	if (measured <= 0) throw OffsetInputError.of('measured', measured, 'must be greater than zero');
	const current = input.currentWear === undefined ? 0 : finite('currentWear', input.currentWear);
	const limit =
		input.wearLimit === undefined
			? DEFAULT_WEAR_LIMIT[units]
			: finite('wearLimit', input.wearLimit);
	if (limit <= 0) throw OffsetInputError.of('wearLimit', limit, 'must be greater than zero');
	const resolution = resolutionFor(units, input.resolution);
	const u = UNIT_LABEL[units];
	const show = (v: number) =>
		roundToResolution(Math.abs(v), resolution).toFixed(units === 'inch' ? 4 : 3);

	const errorMicro = toMicro(measured) - toMicro(nominal);
	const sizeError = fromMicro(errorMicro);
	// A size error bigger than ten wear limits is a wrong number or a wrong tool, not wear.
	if (Math.abs(sizeError) > limit * 10) {
		throw OffsetInputError.of(
			'measured',
			measured,
			`differs from the nominal ${nominal} ${u} by ${show(sizeError)} ${u}, far more than wear (limit ${show(limit)} ${u}); check the number, the units and the feature, or re-measure the tool`
		);
	}
	const words = FEATURE_WORDS[feature];
	const direction = errorMicro < 0 ? words.small : words.big;
	let register: WearRegister;
	let changeMicro: number;
	let why: string;
	if (feature === 'depth') {
		register = 'length';
		// measured < nominal: too shallow, the tip must go lower by the shortfall: negative.
		changeMicro = errorMicro;
		why =
			errorMicro < 0
				? `the tool must reach ${show(sizeError)} ${u} lower`
				: `the tool must stop ${show(sizeError)} ${u} higher`;
	} else {
		register = input.cutterRegister === 'diameter' ? 'diameter' : 'radius';
		// Outside too big or inside too small: cut more, smaller effective radius: negative.
		const cutMore = feature === 'outside' ? errorMicro > 0 : errorMicro < 0;
		const perSide = Math.abs(errorMicro) / 2;
		const magnitude = register === 'diameter' ? Math.abs(errorMicro) : perSide;
		changeMicro = cutMore ? -magnitude : magnitude;
		why = `${cutMore ? 'the tool must cut' : 'the tool must leave'} ${show(fromMicro(perSide))} ${u} ${cutMore ? 'more' : 'less'} on each side`;
	}
	const change = roundToResolution(fromMicro(Math.round(changeMicro)), resolution);
	const newWear = roundToResolution(fromMicro(toMicro(current) + toMicro(change)), resolution);
	const signed = (v: number) => `${v < 0 ? '−' : v > 0 ? '+' : ''}${show(v)}`;
	const label = register === 'length' ? 'length wear' : `${register} wear`;
	const explanation =
		errorMicro === 0
			? `the ${words.noun} is on size: no change`
			: `the ${words.noun} is ${show(sizeError)} ${u} ${direction}: ${why}: ${label} ${signed(change)} ${u}`;
	const cautions: string[] = [];
	if (register !== 'length') {
		cautions.push(
			'Radius wear acts only where the program calls cutter compensation (G41/G42 with this D); a path already offset by the CAM system ignores it.'
		);
	} else {
		cautions.push('Length wear acts through G43 with this H; check the program calls it.');
	}
	const beyondLimit = Math.abs(newWear) > limit;
	if (beyondLimit) {
		cautions.push(
			`The new wear ${signed(newWear)} ${u} is beyond the shop's limit of ${show(limit)} ${u}: re-measure the tool and move the correction into the geometry instead.`
		);
	}
	return { register, sizeError, change, newWear, beyondLimit, explanation, cautions };
}

/** A wear value beyond the limit is a Stop: "move it into geometry after re-measuring". */
export function wearBeyondLimit(
	wear: number,
	units: Units,
	limit = DEFAULT_WEAR_LIMIT[units]
): boolean {
	return Math.abs(finite('wear', wear)) > limit;
}

/** The value the control uses: geometry + wear, at the control's increment. */
export function effectiveValue(
	geometry: number,
	wear: number,
	units: Units,
	resolution?: number
): number {
	return roundToResolution(
		fromMicro(toMicro(finite('geometry', geometry)) + toMicro(finite('wear', wear))),
		resolutionFor(units, resolution)
	);
}
