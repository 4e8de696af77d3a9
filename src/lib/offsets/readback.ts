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
	/** A component beside Z (issue 20); absent for the Z / length value itself. */
	component?: ReadbackComponent;
}

/** The components beside Z a read-back compares (issue 20). */
export type ReadbackComponent = 'x' | 'y' | 'radius' | 'length-wear' | 'radius-wear';

/** What Datumkeep holds beside Z, in the machine's units (`current_offset_components`). */
export interface ExpectedComponents {
	work?: Record<string, { x?: number; y?: number }>;
	tools?: Record<string, { radius?: number; lengthWear?: number; radiusWear?: number }>;
}

/** A register only one side has. */
export interface OneSided {
	section: 'work' | 'tools';
	register: string;
	label: string;
	value: number;
	component?: ReadbackComponent;
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
	/**
	 * Non-zero length wear by H number that Datumkeep keeps no wear for: the control adds it to
	 * the length it uses. (Wear Datumkeep keeps is compared as a row.)
	 */
	wearNotZero: { register: string; label: string; value: number }[];
	/** Component families Datumkeep keeps but the read-back holds none of (not compared). */
	componentsNotRead: ReadbackComponent[];
	equal: number;
	different: number;
}

/** What the control holds, in the machine's units (a parsed file or typed values). */
export interface ReadbackValues {
	work: Record<string, number>;
	tools: Record<string, number>;
	wear?: Record<string, number>;
	/** Beside Z (issue 20): a work offset's X/Y; radius geometry and wear by H/D number. */
	xy?: Record<string, { x?: number; y?: number }>;
	radius?: Record<string, number>;
	radiusWear?: Record<string, number>;
	noPoint?: NoPointFlag[];
	other?: OtherRegister[];
}

export interface ReadbackInput {
	machine: Machine;
	/** Datumkeep's current table, in the machine's units. */
	expected: OffsetTable;
	actual: ReadbackValues;
	/** Datumkeep's X/Y, radius and wear values, compared like Z when the read-back has them. */
	expectedComponents?: ExpectedComponents;
	/**
	 * Older values of each register (not the current one), for the stale test; `components` by
	 * "<register>|<component>" ("G54|x", "3|radius-wear").
	 */
	history?: {
		work?: Record<string, number[]>;
		tools?: Record<string, number[]>;
		components?: Record<string, number[]>;
	};
	policy?: PolicyInput;
}

const COMPONENT_WORDS: Record<ReadbackComponent, string> = {
	x: 'X',
	y: 'Y',
	radius: 'radius',
	'length-wear': 'length wear',
	'radius-wear': 'radius wear'
};

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

/** "G54 X", "H3 radius wear": a component's label. */
export function componentRowLabel(
	section: 'work' | 'tools',
	register: string,
	component: ReadbackComponent,
	form: ExtendedAddressForm = 'G54.1 P'
): string {
	return `${registerLabel(section, register, form)} ${COMPONENT_WORDS[component]}`;
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

	/** One register's value on both sides: equal, or different with its likely causes. */
	const compareOne = (c: {
		section: 'work' | 'tools';
		register: string;
		label: string;
		e: number;
		a: number;
		flag: NoPointFlag | undefined;
		older: number[];
		neighbours: { label: string; value: number }[];
		component?: ReadbackComponent;
	}): ReadbackRow => {
		const { e, a, flag, label } = c;
		const same = inc(a) === inc(e);
		const row: ReadbackRow = {
			section: c.section,
			register: c.register,
			label,
			expected: fromIncrements(inc(e), res),
			actual: fromIncrements(inc(a), res),
			status: same ? 'equal' : 'different',
			difference: fromIncrements(inc(a) - inc(e), res),
			causes: []
		};
		if (c.component) row.component = c.component;
		if (flag) row.noPoint = flag;
		if (same) return row;
		const causes = row.causes;
		if (flag && inc(flag.otherReading) === inc(e))
			causes.push({
				kind: 'no-decimal-point',
				text: `The control holds ${fmt(a)} because "${flag.text}" was written without a decimal point and this control reads it as ${flag.readAs}; written as ${fmt(e)} with its point it would match.`
			});
		const olderValues = c.older.filter((v) => inc(v) !== inc(e));
		if (olderValues.some((v) => inc(v) === inc(a)))
			causes.push({
				kind: 'stale',
				text: `The control still holds an older value of ${label} (${fmt(a)}): the newest value ${fmt(e)} was not entered or loaded.`
			});
		for (const other of c.neighbours) {
			if (inc(other.value) === inc(a) && inc(other.value) !== inc(e))
				causes.push({
					kind: 'off-by-one',
					text: `${label} holds ${other.label}’s value (${fmt(a)}): it was probably typed one register off.`
				});
		}
		const slip = slipKind(a, e, m.units, res, policy);
		if (isSlip(slip)) causes.push({ kind: slip, text: SLIP_WORDS[slip](label, fmt(a), fmt(e)) });
		if (causes.length === 0)
			causes.push({
				kind: 'unexplained',
				text: `${label} differs by ${fmt(a - e)} and no typing slip explains it: read the value on the control again, then enter ${fmt(e)} or re-measure.`
			});
		return row;
	};

	for (const section of ['work', 'tools'] as const) {
		const exp = expected[section];
		const act = actual[section];
		for (const [register, e] of Object.entries(exp)) {
			const label = registerLabel(section, register, m.extendedAddress);
			if (!(register in act)) {
				onlyInDatumkeep.push({ section, register, label, value: e });
				continue;
			}
			const neighbours = (section === 'work' ? workNeighbours(register) : toolNeighbours(register))
				.filter((other) => other in exp)
				.map((other) => ({
					label: registerLabel(section, other, m.extendedAddress),
					value: exp[other]
				}));
			const row = compareOne({
				section,
				register,
				label,
				e,
				a: act[register],
				flag: noPoint.get(`${section}|${register}`),
				older: older[section][register] ?? [],
				neighbours
			});
			if (section === 'tools' && register in wear) row.wear = wear[register];
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

	// Beside Z (issue 20): X/Y, radius geometry and wear, each family compared when the read-back
	// holds any of it (a file without L13 lines says nothing about radius wear), by the same
	// rules and causes as Z. Values the control holds that Datumkeep keeps none of are not
	// listed: every work offset at a control has an X and Y.
	const componentsNotRead: ReadbackComponent[] = [];
	const ec = input.expectedComponents ?? {};
	const families: {
		component: ReadbackComponent;
		section: 'work' | 'tools';
		expected: Record<string, number>;
		actual: Record<string, number>;
	}[] = [
		{
			component: 'x',
			section: 'work',
			expected: pickField(ec.work, 'x'),
			actual: pickField(input.actual.xy, 'x')
		},
		{
			component: 'y',
			section: 'work',
			expected: pickField(ec.work, 'y'),
			actual: pickField(input.actual.xy, 'y')
		},
		{
			component: 'radius',
			section: 'tools',
			expected: pickField(ec.tools, 'radius'),
			actual: input.actual.radius ?? {}
		},
		{
			component: 'length-wear',
			section: 'tools',
			expected: pickField(ec.tools, 'lengthWear'),
			actual: wear
		},
		{
			component: 'radius-wear',
			section: 'tools',
			expected: pickField(ec.tools, 'radiusWear'),
			actual: input.actual.radiusWear ?? {}
		}
	];
	const comparedWear = new Set<string>();
	for (const f of families) {
		const exp = canonicalKeys(f.expected, f.section, `expectedComponents.${f.component}`);
		const act = canonicalKeys(f.actual, f.section, `actual.${f.component}`);
		if (Object.keys(exp).length === 0) continue;
		if (Object.keys(act).length === 0) {
			componentsNotRead.push(f.component);
			continue;
		}
		const lbl = (register: string) =>
			componentRowLabel(f.section, register, f.component, m.extendedAddress);
		for (const [register, e] of Object.entries(exp)) {
			if (!(register in act)) {
				onlyInDatumkeep.push({
					section: f.section,
					register,
					label: lbl(register),
					value: e,
					component: f.component
				});
				continue;
			}
			if (f.component === 'length-wear') comparedWear.add(register);
			const neighbours = (
				f.section === 'work' ? workNeighbours(register) : toolNeighbours(register)
			)
				.filter((other) => other in exp)
				.map((other) => ({ label: lbl(other), value: exp[other] }));
			rows.push(
				compareOne({
					section: f.section,
					register,
					label: lbl(register),
					e,
					a: act[register],
					flag: noPoint.get(`${f.component === 'length-wear' ? 'wear' : f.component}|${register}`),
					older: input.history?.components?.[`${register}|${f.component}`] ?? [],
					neighbours,
					component: f.component
				})
			);
		}
	}
	const wearNotZero = Object.entries(wear)
		.filter(([h, v]) => inc(v) !== 0 && !comparedWear.has(h))
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
		componentsNotRead,
		equal: rows.filter((r) => r.status === 'equal').length,
		different: rows.filter((r) => r.status === 'different').length
	};
}

/** One field of each register's record, as a plain register → value record. */
function pickField<K extends string>(
	record: Record<string, Partial<Record<K, number>>> | undefined,
	field: K
): Record<string, number> {
	const out: Record<string, number> = {};
	for (const [k, v] of Object.entries(record ?? {}))
		if (v?.[field] !== undefined) out[k] = v[field]!;
	return out;
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
