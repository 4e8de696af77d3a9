/**
 * From Readings (machine Z shown at a touch-off) to offsets, in each convention.
 *
 * A Reading is the gauge-line machine Z the control shows with a tool tip (or probe) touching
 * something. When the tip touches a setter or gauge block of height s standing on a surface,
 * the tip is s above that surface, so the reading is s higher: subtract s (DESIGN.md §2;
 * ETSU ENTC 3710 ch. 11 describes the touch on a 0.100 in block).
 */
import type { Convention } from './conventions';
import { REFERENCE_DEPENDENCE } from './conventions';
import { OffsetInputError } from './errors';
import {
	reestablishSchema,
	toolTouchSchema,
	workFromPartTouchSchema,
	workFromReadingsSchema,
	workFromRelativeSchema
} from './schemas';
import { machineName, normalizeTable, travelLimits } from './table';
import type { Machine, OffsetTable } from './types';
import { fromMicro, resolutionFor, roundToResolution, toMicro, type Units } from './units';
import { parseInput } from './validate';

function withinTravel(machine: Machine | undefined, field: string, value: number): void {
	if (!machine) return;
	const { min, max } = travelLimits(machine);
	if (value < min || value > max) {
		throw OffsetInputError.of(
			field,
			value,
			`is outside the Z travel of ${machineName(machine)} (${min} to ${max}); a reading must lie within travel`
		);
	}
}

function output(micro: number, units: Units, resolution?: number, machine?: Machine): number {
	return roundToResolution(
		fromMicro(micro),
		resolutionFor(units, resolution ?? machine?.resolution)
	);
}

function needed(field: string, value: number | undefined, why: string): number {
	if (value === undefined) throw OffsetInputError.of(field, value, why);
	return toMicro(value, field);
}

const R_WHY =
	'is needed for the gauge-length convention: R = reading of a tool or probe of known length on the reference, minus setter height, minus its length';
const M_WHY =
	"is needed for the master-tool convention: the master tool's reading on the reference, minus any setter height";

/**
 * R, the gauge-line machine Z on the reference, from a tool or probe of known length touched
 * on it: R = touchZ − s − length.
 */
export function referenceGaugeLineZFromTouch(input: {
	units: Units;
	touchZ: number;
	toolLength: number;
	setterHeight?: number;
	resolution?: number;
	machine?: Machine;
}): number {
	const i = parseInput(
		toolTouchSchema
			.pick({ units: true, touchZ: true, setterHeight: true, resolution: true, machine: true })
			.extend({
				toolLength: toolTouchSchema.shape.touchZ.positive('must be greater than zero')
			}),
		input,
		'input'
	);
	withinTravel(i.machine, 'touchZ', i.touchZ);
	return output(
		toMicro(i.touchZ) - toMicro(i.setterHeight ?? 0) - toMicro(i.toolLength),
		i.units,
		i.resolution,
		i.machine
	);
}

/**
 * Tool length offset from a tool tip touched on the reference, directly or through a setter
 * or gauge block of height s: the touch gives R + L_i = touchZ − s, then
 * reference-touch: H = R + L_i; gauge-length: H = L_i (needs `referenceGaugeLineZ`);
 * master-tool: H = L_i − L_m (needs `masterTouchZ` = R + L_m).
 * @throws OffsetInputError for bad numbers, a reading outside travel, missing R / masterTouchZ,
 * or a gauge length that comes out zero or negative
 */
export function toolOffsetFromTouch(input: {
	convention: Convention;
	units: Units;
	touchZ: number;
	setterHeight?: number;
	referenceGaugeLineZ?: number;
	masterTouchZ?: number;
	resolution?: number;
	machine?: Machine;
}): number {
	const i = parseInput(toolTouchSchema, input, 'input');
	withinTravel(i.machine, 'touchZ', i.touchZ);
	const tipOnReference = toMicro(i.touchZ) - toMicro(i.setterHeight ?? 0);
	let h = tipOnReference;
	if (i.convention === 'gauge-length') {
		h = tipOnReference - needed('referenceGaugeLineZ', i.referenceGaugeLineZ, R_WHY);
		if (h <= 0) {
			throw OffsetInputError.of(
				'touchZ',
				i.touchZ,
				`gives a tool length of ${fromMicro(h)} ${i.units}; the tip cannot be at or above the gauge line: check R and the setter height`
			);
		}
	} else if (i.convention === 'master-tool') {
		h = tipOnReference - needed('masterTouchZ', i.masterTouchZ, M_WHY);
	}
	return output(h, i.units, i.resolution, i.machine);
}

/**
 * h_k, the height of a program zero above the reference, from the same tool or probe read at
 * the reference and at the part top (each through its own setter height, 0 if direct).
 */
export function zeroHeightFromReadings(input: {
	units: Units;
	referenceZ: number;
	partTopZ: number;
	referenceSetterHeight?: number;
	partSetterHeight?: number;
	resolution?: number;
	machine?: Machine;
}): number {
	const i = parseInput(workFromReadingsSchema.omit({ convention: true }), input, 'input');
	withinTravel(i.machine, 'referenceZ', i.referenceZ);
	withinTravel(i.machine, 'partTopZ', i.partTopZ);
	const h =
		toMicro(i.partTopZ) -
		toMicro(i.partSetterHeight ?? 0) -
		(toMicro(i.referenceZ) - toMicro(i.referenceSetterHeight ?? 0));
	return output(h, i.units, i.resolution, i.machine);
}

function workFromHeight(
	convention: Convention,
	h: number,
	referenceGaugeLineZ: number | undefined,
	masterTouchZ: number | undefined
): number {
	if (convention === 'reference-touch') return h;
	if (convention === 'gauge-length')
		return needed('referenceGaugeLineZ', referenceGaugeLineZ, R_WHY) + h;
	return needed('masterTouchZ', masterTouchZ, M_WHY) + h;
}

/**
 * Work offset Z from the reading at the reference and the reading at the part top (same tool
 * or probe): h = (partTopZ − s_part) − (referenceZ − s_ref), then
 * reference-touch: W = h; gauge-length: W = R + h; master-tool: W = (R + L_m) + h.
 */
export function workOffsetZFromReadings(input: {
	convention: Convention;
	units: Units;
	referenceZ: number;
	partTopZ: number;
	referenceSetterHeight?: number;
	partSetterHeight?: number;
	referenceGaugeLineZ?: number;
	masterTouchZ?: number;
	resolution?: number;
	machine?: Machine;
}): number {
	const i = parseInput(workFromReadingsSchema, input, 'input');
	const h = toMicro(zeroHeightFromReadings(input));
	return output(
		workFromHeight(i.convention, h, i.referenceGaugeLineZ, i.masterTouchZ),
		i.units,
		i.resolution,
		i.machine
	);
}

/**
 * Work offset Z by the relative-display method: zero the relative Z display with the tip at the
 * reference (on a setter of height s0, or directly), then read it at the part top (on a setter
 * of height s1). The display then shows h + s1 − s0, so h = reading − s1 + s0; W follows as in
 * workOffsetZFromReadings.
 */
export function workOffsetZFromRelative(input: {
	convention: Convention;
	units: Units;
	relativeReading: number;
	zeroedOnSetterHeight?: number;
	partSetterHeight?: number;
	referenceGaugeLineZ?: number;
	masterTouchZ?: number;
	resolution?: number;
}): number {
	const i = parseInput(workFromRelativeSchema, input, 'input');
	const h =
		toMicro(i.relativeReading) -
		toMicro(i.partSetterHeight ?? 0) +
		toMicro(i.zeroedOnSetterHeight ?? 0);
	return output(
		workFromHeight(i.convention, h, i.referenceGaugeLineZ, i.masterTouchZ),
		i.units,
		i.resolution
	);
}

/**
 * Work offset Z from any tool whose offset H is already set, touched on the part top:
 * W = reading − s − H, in every convention, because W + H is the gauge-line Z with that tool's
 * tip at program zero (NISTIR 6556 composition with program Z 0).
 */
export function workOffsetZFromPartTouch(input: {
	units: Units;
	partTopZ: number;
	toolOffset: number;
	setterHeight?: number;
	resolution?: number;
	machine?: Machine;
}): number {
	const i = parseInput(workFromPartTouchSchema, input, 'input');
	withinTravel(i.machine, 'partTopZ', i.partTopZ);
	return output(
		toMicro(i.partTopZ) - toMicro(i.setterHeight ?? 0) - toMicro(i.toolOffset),
		i.units,
		i.resolution,
		i.machine
	);
}

/** What re-establishing the reference did to a table. */
export interface ReestablishResult {
	/** d = new − previous reading of the same tool (or probe) on the reference, same setter. */
	shift: number;
	/** The table corrected by d. */
	table: OffsetTable;
	/** Registers and H numbers whose old values are now stale (and were corrected). */
	changed: { work: string[]; tools: string[] };
	/** Plain sentence for the screen. */
	message: string;
}

/**
 * Re-establishing the reference: the same tool or probe is touched on the reference again and
 * reads d differently from before. Which offsets that moves depends on the convention and on
 * what moved (see REFERENCE_DEPENDENCE):
 * - `machine-shift` (machine Z re-homed / repaired; the table and parts did not move): every
 *   machine-coordinate value moves by d — reference-touch tool offsets (R + L_i), and
 *   gauge-length / master-tool work offsets (R + h_k …). Spindle Z at program zero moves by d.
 * - `surface-moved` (the reference block was set down at a new height; the parts did not
 *   move): R moves by d and every h_k by −d — so reference-touch tool offsets gain d and its
 *   work offsets lose d; gauge-length and master-tool tables are unchanged. Spindle Z at
 *   program zero stays the same.
 * Readings taken before re-establishing stay in the record but are stale-reference from now on.
 */
export function reestablishReference(input: {
	table: OffsetTable;
	previousReferenceZ: number;
	newReferenceZ: number;
	cause: 'machine-shift' | 'surface-moved';
}): ReestablishResult {
	const i = parseInput(reestablishSchema, input, 'input');
	const t = normalizeTable(i.table, 'input.table');
	const d = toMicro(i.newReferenceZ) - toMicro(i.previousReferenceZ);
	const dep =
		REFERENCE_DEPENDENCE[t.convention][
			i.cause === 'machine-shift' ? 'machineShift' : 'surfaceMoved'
		];
	// surface-moved changes h_k by −d; machine-shift changes absolute work offsets by +d
	const workDelta = !dep.work ? 0 : i.cause === 'surface-moved' ? -d : d;
	const toolDelta = dep.tools ? d : 0;
	const work: Record<string, number> = {};
	const tools: Record<string, number> = {};
	for (const [k, v] of Object.entries(t.work)) work[k] = fromMicro(toMicro(v) + workDelta);
	for (const [k, v] of Object.entries(t.tools)) tools[k] = fromMicro(toMicro(v) + toolDelta);
	const changed = {
		work: d !== 0 && dep.work ? Object.keys(t.work) : [],
		tools:
			d !== 0 && dep.tools
				? Object.keys(t.tools).filter(
						(h) => !(t.convention === 'master-tool' && h === t.masterTool)
					)
				: []
	};
	const table: OffsetTable = { ...t, work, tools };
	const signed = (m: number) => `${m > 0 ? '+' : ''}${fromMicro(m)} ${t.units}`;
	const parts = [
		changed.tools.length
			? `${changed.tools.length} tool length offset(s) change by ${signed(toolDelta)}`
			: '',
		changed.work.length
			? `${changed.work.length} work offset(s) change by ${signed(workDelta)}`
			: ''
	].filter(Boolean);
	const message =
		d === 0
			? 'The reference reads the same as before: no offset changes.'
			: parts.length === 0
				? `The reference reads ${signed(d)} from before, but in the ${t.convention} convention no stored offset depends on it. Re-check one tool at a fixture before cutting.`
				: `The reference reads ${signed(d)} from before: ${parts.join(' and ')}. Load the corrected values and re-check one tool at each fixture before cutting.`;
	return { shift: fromMicro(d), table, changed, message };
}
