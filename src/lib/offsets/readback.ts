/**
 * Read-back: what the control holds, compared register by register with what Datumkeep
 * computed, at the machine's increment. For a difference it names the likely cause in plain
 * words, using the same slip tests as the history checks (check-history.ts) plus three that
 * only a read-back can see: a register off by one, a stale value (an older version of this
 * register) and a value written without a decimal point.
 */
import { slipKind } from './check-history';
import { OffsetInputError } from './errors';
import { formatWithUnits } from './format';
import type { NoPointFlag, OtherRegister } from './parse-load-program';
import { resolvePolicy } from './policy';
import {
	canonicalH,
	canonicalRegister,
	extendedNumber,
	registerForMachine,
	STANDARD_WORK_REGISTERS,
	type ExtendedAddressForm
} from './registers';
import { normalizeTable, parseMachine } from './table';
import type { Machine, OffsetTable, PolicyInput } from './types';
import { fromIncrements, resolutionFor, toIncrements } from './units';

/** Why a register differs, most likely first. */
export const READBACK_CAUSES = [
	'no-decimal-point',
	'stale',
	'off-by-one',
	'sign-flip',
	'transposed-digits',
	'unit-slip',
	'decimal-slip',
	'unexplained'
] as const;
export type ReadbackCause = (typeof READBACK_CAUSES)[number];

/** Plain titles for the causes (users never see the codes). */
export const READBACK_CAUSE_TITLE: Readonly<Record<ReadbackCause, string>> = {
	'no-decimal-point': 'Written without a decimal point',
	stale: 'An older value of this register',
	'off-by-one': 'The neighbouring register’s value',
	'sign-flip': 'Sign flipped',
	'transposed-digits': 'Two digits swapped',
	'unit-slip': 'Inch/mm slip (×25.4)',
	'decimal-slip': 'Decimal point shifted (×10)',
	unexplained: 'No typing slip found'
};

/** One register in both tables (or one of them). */
export interface ReadbackRow {
	section: 'work' | 'tools';
	/** Canonical register: "G54", "G54.1 P3" or the H number ("3"). */
	register: string;
	/** As shown: "G54", "G54.1 P3", "H3". */
	label: string;
	/** What Datumkeep computed (machine units). */
	expected: number;
	/** What the control holds (machine units). */
	actual: number;
	status: 'equal' | 'different';
	/** actual − expected, at the machine's increment. */
	difference: number;
	/** Likely causes of a difference, most likely first (empty when equal). */
	causes: { kind: ReadbackCause; text: string }[];
	/** The control's value was written without a decimal point (always worth a look). */
	noPoint?: NoPointFlag;
	/** ISO-style length wear of this H number, when the file or the operator gave it. */
	wear?: number;
}

/** A register only one side has. */
export interface OneSided {
	section: 'work' | 'tools';
	register: string;
	label: string;
	value: number;
}

export interface ReadbackComparison {
	units: Machine['units'];
	resolution: number;
	rows: ReadbackRow[];
	/** Registers the control holds (non-zero) that Datumkeep does not keep a value for. */
	onlyAtControl: OneSided[];
	/** Registers Datumkeep computed that the read-back does not have. */
	onlyInDatumkeep: OneSided[];
	/** Zero registers at the control that Datumkeep does not use (counted, not listed). */
	emptyAtControl: number;
	/** Registers the file sets that Datumkeep has no place for (G59.1, P0…). */
	other: OtherRegister[];
	/** Non-zero length wear by H number: the control adds it to the length it uses. */
	wearNotZero: { register: string; label: string; value: number }[];
	equal: number;
	different: number;
}

/** What the control holds, in the machine's units (a parsed file or typed values). */
export interface ReadbackValues {
	work: Record<string, number>;
	tools: Record<string, number>;
	wear?: Record<string, number>;
	noPoint?: NoPointFlag[];
	other?: OtherRegister[];
}

export interface ReadbackInput {
	machine: Machine;
	/** Datumkeep's current table, in the machine's units. */
	expected: OffsetTable;
	actual: ReadbackValues;
	/** Older values of each register (not the current one), for the stale test. */
	history?: { work?: Record<string, number[]>; tools?: Record<string, number[]> };
	policy?: PolicyInput;
}

/**
 * How a register is shown: "H3" for tools, the work register as the machine's programs address
 * it ("G54.1 P3", or "G54 P3" on a machine set that way).
 */
export function registerLabel(
	section: 'work' | 'tools' | 'wear',
	register: string,
	form: ExtendedAddressForm = 'G54.1 P'
): string {
	if (section === 'work') return registerForMachine(register, form);
	return section === 'wear' ? `H${register} wear` : `H${register}`;
}

/** The registers either side of a work register in control order (G54 → G55; G54.1 P3 → P2, P4). */
function workNeighbours(register: string): string[] {
	const std = STANDARD_WORK_REGISTERS.indexOf(register as (typeof STANDARD_WORK_REGISTERS)[number]);
	if (std >= 0)
		return [STANDARD_WORK_REGISTERS[std - 1], STANDARD_WORK_REGISTERS[std + 1]].filter(
			(r): r is (typeof STANDARD_WORK_REGISTERS)[number] => r !== undefined
		);
	const n = extendedNumber(register);
	if (n === null) return [];
	return [n - 1, n + 1]
		.map((k) => canonicalRegister(`G54.1 P${k}`))
		.filter((r): r is string => r !== null);
}

function toolNeighbours(h: string): string[] {
	const n = Number(h);
	return [n - 1, n + 1].map((k) => canonicalH(String(k))).filter((r): r is string => r !== null);
}

function canonicalKeys(
	record: Record<string, number> | undefined,
	section: 'work' | 'tools',
	field: string
): Record<string, number> {
	const out: Record<string, number> = {};
	for (const [k, v] of Object.entries(record ?? {})) {
		const c = section === 'work' ? canonicalRegister(k) : canonicalH(k);
		if (c === null)
			throw OffsetInputError.of(
				`${field}.${k}`,
				k,
				section === 'work'
					? 'is not a work offset Datumkeep keeps (G54–G59, G54.1 P1–P48)'
					: 'is not an H number (1–9999)'
			);
		if (typeof v !== 'number' || !Number.isFinite(v))
			throw OffsetInputError.of(`${field}.${k}`, v, 'must be a finite number');
		out[c] = v;
	}
	return out;
}

/**
 * Compares what the control holds with what Datumkeep computed, register by register, at the
 * machine's increment. Nothing is changed: the result says equal or different and, for a
 * difference, the likely causes in plain words.
 * @throws OffsetInputError for a bad machine, table or value
 */
export function compareReadback(input: ReadbackInput): ReadbackComparison {
	const m = parseMachine(input.machine);
	const expected = normalizeTable(input.expected, 'expected');
	if (expected.units !== m.units)
		throw OffsetInputError.of(
			'expected.units',
			expected.units,
			`must be the machine's units (${m.units}): convert the table first`
		);
	const res = resolutionFor(m.units, m.resolution);
	const policy = resolvePolicy(input.policy, m.units);
	const inc = (v: number) => toIncrements(v, res);
	const fmt = (v: number) => formatWithUnits(v, m.units, res);
	const actual = {
		work: canonicalKeys(input.actual.work, 'work', 'actual.work'),
		tools: canonicalKeys(input.actual.tools, 'tools', 'actual.tools')
	};
	const wear = canonicalKeys(input.actual.wear, 'tools', 'actual.wear');
	const noPoint = new Map(
		(input.actual.noPoint ?? []).map((f) => [`${f.section}|${f.register}`, f] as const)
	);
	const older = {
		work: input.history?.work ?? {},
		tools: input.history?.tools ?? {}
	};

	const rows: ReadbackRow[] = [];
	const onlyAtControl: OneSided[] = [];
	const onlyInDatumkeep: OneSided[] = [];
	let emptyAtControl = 0;
	for (const section of ['work', 'tools'] as const) {
		const exp = expected[section];
		const act = actual[section];
		for (const [register, e] of Object.entries(exp)) {
			const label = registerLabel(section, register, m.extendedAddress);
			if (!(register in act)) {
				onlyInDatumkeep.push({ section, register, label, value: e });
				continue;
			}
			const a = act[register];
			const same = inc(a) === inc(e);
			const flag = noPoint.get(`${section}|${register}`);
			const row: ReadbackRow = {
				section,
				register,
				label,
				expected: fromIncrements(inc(e), res),
				actual: fromIncrements(inc(a), res),
				status: same ? 'equal' : 'different',
				difference: fromIncrements(inc(a) - inc(e), res),
				causes: []
			};
			if (flag) row.noPoint = flag;
			if (section === 'tools' && register in wear) row.wear = wear[register];
			if (!same) {
				const causes = row.causes;
				if (flag && inc(flag.otherReading) === inc(e))
					causes.push({
						kind: 'no-decimal-point',
						text: `The control holds ${fmt(a)} because "${flag.text}" was written without a decimal point and this control reads it as ${flag.readAs}; written as ${fmt(e)} with its point it would match.`
					});
				const olderValues = (older[section][register] ?? []).filter((v) => inc(v) !== inc(e));
				if (olderValues.some((v) => inc(v) === inc(a)))
					causes.push({
						kind: 'stale',
						text: `The control still holds an older value of ${label} (${fmt(a)}): the newest value ${fmt(e)} was not entered or loaded.`
					});
				const neighbours = section === 'work' ? workNeighbours(register) : toolNeighbours(register);
				for (const other of neighbours) {
					if (other in exp && inc(exp[other]) === inc(a) && inc(exp[other]) !== inc(e))
						causes.push({
							kind: 'off-by-one',
							text: `${label} holds ${registerLabel(section, other, m.extendedAddress)}’s value (${fmt(a)}): it was probably typed one register off.`
						});
				}
				const slip = slipKind(a, e, m.units, res, policy);
				if (isSlip(slip))
					causes.push({ kind: slip, text: SLIP_WORDS[slip](label, fmt(a), fmt(e)) });
				if (causes.length === 0)
					causes.push({
						kind: 'unexplained',
						text: `${label} differs by ${fmt(a - e)} and no typing slip explains it: read the value on the control again, then enter ${fmt(e)} or re-measure.`
					});
			}
			rows.push(row);
		}
		for (const [register, a] of Object.entries(act)) {
			if (register in exp) continue;
			if (inc(a) === 0) emptyAtControl += 1;
			else
				onlyAtControl.push({
					section,
					register,
					label: registerLabel(section, register, m.extendedAddress),
					value: a
				});
		}
	}
	const wearNotZero = Object.entries(wear)
		.filter(([, v]) => inc(v) !== 0)
		.map(([register, value]) => ({ register, label: registerLabel('wear', register), value }));
	return {
		units: m.units,
		resolution: res,
		rows,
		onlyAtControl,
		onlyInDatumkeep,
		emptyAtControl,
		other: input.actual.other ?? [],
		wearNotZero,
		equal: rows.filter((r) => r.status === 'equal').length,
		different: rows.filter((r) => r.status === 'different').length
	};
}

type Slip = 'sign-flip' | 'transposed-digits' | 'unit-slip' | 'decimal-slip';
const SLIP_WORDS: Record<Slip, (label: string, a: string, e: string) => string> = {
	'sign-flip': (l, a, e) =>
		`${l} holds ${a} where ${e} was computed: the same size with the other sign, so a minus sign was probably added or dropped.`,
	'transposed-digits': (l, a, e) =>
		`${l} holds ${a} where ${e} was computed: two neighbouring digits are swapped.`,
	'unit-slip': (l, a, e) =>
		`${l} holds ${a} where ${e} was computed: about 25.4 times off, so it was probably entered in the other unit (inch vs mm).`,
	'decimal-slip': (l, a, e) =>
		`${l} holds ${a} where ${e} was computed: about 10 times off, so the decimal point is probably in the wrong place.`
};
const isSlip = (k: string | null): k is Slip => k !== null && k in SLIP_WORDS;
