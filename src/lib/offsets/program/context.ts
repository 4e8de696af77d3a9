/**
 * Turns a validated program setup into plain numbers in the machine's units, once, so the
 * per-line work is arithmetic on doubles and map look-ups only.
 */
import { clearancePlanes } from '../clearance';
import { OffsetInputError } from '../errors';
import { canonicalH, canonicalRegister } from '../registers';
import { normalizeTable, parseMachine, travelLimits } from '../table';
import { resolutionFor, toUnits, type Units } from '../units';
import { parseInput } from '../validate';
import type { Dialect, DialectFrom } from './dialect';
import { programSetupSchema, type ProgramSetup, type RegisterState } from './schema';

/** A fixture of the setup, heights above the reference in machine units. */
export interface FixtureInfo {
	zeroHeight: number;
	topHeight: number;
}

/** Everything the interpreter needs, in machine units. */
export interface CheckContext {
	units: Units;
	resolution: number;
	machineName: string;
	zMin: number;
	zMax: number;
	toolChangeZ: number;
	/** Table work offsets Z by canonical register. */
	work: Map<string, number>;
	/** Table tool length offsets by canonical H number. */
	tools: Map<string, number>;
	fixtures: Map<string, FixtureInfo>;
	/** Clearance plane per register, in that fixture's coordinates (clearancePlanes). */
	planes: Record<string, number>;
	/** Lowest safe tip height above the reference (tallest obstacle + margin). */
	safeHeight: number;
	/**
	 * R + L_t − H_t: the same for every tool in a table (0 for reference-touch, R for
	 * gauge-length, R + L_m for master-tool). NaN when the geometry was not given.
	 */
	conventionConstant: number;
	convention: string;
	masterTool: string | undefined;
	toolRegisters: Map<string, string>;
	workStatus: Map<string, RegisterState[]>;
	toolStatus: Map<string, RegisterState[]>;
	programId: string | undefined;
	maxPerKind: number;
	dialect: Dialect;
	dialectFrom: DialectFrom;
	profile: boolean;
}

const asList = (s: RegisterState | RegisterState[]): RegisterState[] =>
	Array.isArray(s) ? [...new Set(s)] : [s];

/**
 * Validates a setup and resolves it.
 * @throws OffsetInputError when the setup cannot be used (the program text never throws)
 */
export function resolveContext(input: ProgramSetup): CheckContext {
	const s = parseInput(programSetupSchema, input, 'setup');
	const machine = parseMachine(s.machine, 'setup.machine');
	const table = normalizeTable(s.table, 'setup.table');
	const units = machine.units;
	if (table.units !== units) {
		throw OffsetInputError.of(
			'setup.table.units',
			table.units,
			`must match the machine's units (${units}): offsets are read as the control holds them`
		);
	}
	const conv = (v: number) => toUnits(v, s.setup.units, units);
	const { min: zMin, max: zMax } = travelLimits(machine);
	const fixtures = new Map<string, FixtureInfo>();
	for (const f of s.setup.fixtures) {
		const zero = conv(f.zeroHeight);
		fixtures.set(canonicalRegister(f.register)!, {
			zeroHeight: zero,
			topHeight: f.topHeight === undefined ? zero : conv(f.topHeight)
		});
	}
	const rawPlanes = clearancePlanes(s.setup, s.policy);
	const planes: Record<string, number> = {};
	let safeHeight = -Infinity;
	for (const f of s.setup.fixtures) {
		const r = canonicalRegister(f.register)!;
		planes[r] = conv(rawPlanes[r]);
		// Every plane + its h_k is the same height above the reference; take the highest so
		// rounding up per fixture never lowers it.
		safeHeight = Math.max(safeHeight, conv(rawPlanes[r] + f.zeroHeight));
	}
	let conventionConstant = Number.NaN;
	if (table.convention === 'reference-touch') conventionConstant = 0;
	else if (table.convention === 'gauge-length' && s.geometry?.referenceGaugeLineZ !== undefined)
		conventionConstant = s.geometry.referenceGaugeLineZ;
	else if (table.convention === 'master-tool' && s.geometry?.masterTouchZ !== undefined)
		conventionConstant = s.geometry.masterTouchZ;
	const toolRegisters = new Map<string, string>();
	for (const [t, h] of Object.entries(s.toolRegisters ?? {})) {
		const n = Number(t);
		if (Number.isInteger(n) && n >= 0) toolRegisters.set(String(n), canonicalH(h)!);
	}
	const workStatus = new Map<string, RegisterState[]>();
	for (const [r, st] of Object.entries(s.registerStatus?.work ?? {}))
		workStatus.set(canonicalRegister(r)!, asList(st));
	const toolStatus = new Map<string, RegisterState[]>();
	for (const [h, st] of Object.entries(s.registerStatus?.tools ?? {}))
		toolStatus.set(canonicalH(h)!, asList(st));
	return {
		units,
		resolution: resolutionFor(units, machine.resolution),
		machineName: machine.name ?? machine.id ?? 'the machine',
		zMin,
		zMax,
		toolChangeZ: s.toolChangeZ ?? zMax,
		work: new Map(Object.entries(table.work)),
		tools: new Map(Object.entries(table.tools)),
		fixtures,
		planes,
		safeHeight,
		conventionConstant,
		convention: table.convention,
		masterTool: table.masterTool,
		toolRegisters,
		workStatus,
		toolStatus,
		programId: s.programId,
		maxPerKind: s.maxFindingsPerKind ?? 25,
		dialect: s.dialect ?? machine.controlStyle ?? 'rs274ngc',
		dialectFrom: s.dialect ? 'chosen' : machine.controlStyle ? 'machine' : 'default',
		profile: s.profile ?? false
	};
}
