/**
 * Differences of lengths outside the touch-off formulas: the change from one value of a
 * register to the next, the tip's Z at a touch (reading minus block) and a program zero's
 * height above the reference from a work offset. All of them are subtractions done on whole
 * micro-units (./units), so a change of 0.0002 in never shows up as 0.00019999999999953388.
 */
import type { Convention } from './conventions';
import { fromMicro, toMicro } from './units';

/** a − b exactly, on whole micro-units. */
function minus(a: number, b: number, fields: [string, string]): number {
	return fromMicro(toMicro(a, fields[0]) - toMicro(b, fields[1]));
}

/**
 * The change of an offset from its previous value (value − previous), exact to the micro-unit:
 * what a preview or a register's history shows as "change".
 * @example offsetDelta(-14.7502, -14.75) // -0.0002
 */
export function offsetDelta(value: number, previous: number): number {
	return minus(value, previous, ['value', 'previous']);
}

/**
 * The gauge-line machine Z the reading would show with the tip on the surface itself: the
 * reading minus the height of the block or setter the tip touched (docs/OFFSETS.md §4).
 */
export function tipZ(machineZ: number, blockHeight: number): number {
	return minus(machineZ, blockHeight, ['machineZ', 'blockHeight']);
}

/** What besides the work offset h_k needs, per convention (docs/OFFSETS.md §2). */
export interface ZeroHeightGeometry {
	/** R: gauge-line machine Z on the reference (gauge-length). */
	referenceGaugeLineZ: number | null;
	/** R + L_m: the master tool's touch on the reference, minus any block (master-tool). */
	masterTouchZ: number | null;
}

/**
 * h_k, the height of a fixture's program zero above the reference, from its work offset Z by
 * the convention table (docs/OFFSETS.md §2): reference-touch W = h; gauge-length W = R + h;
 * master-tool W = (R + L_m) + h. Null when the value the convention needs (R, or R + L_m) is
 * not known.
 */
export function zeroHeightFromWorkOffset(
	convention: Convention,
	workZ: number,
	g: ZeroHeightGeometry
): number | null {
	if (convention === 'reference-touch') return workZ;
	const base = convention === 'gauge-length' ? g.referenceGaugeLineZ : g.masterTouchZ;
	if (base === null) return null;
	return minus(workZ, base, [
		'workZ',
		convention === 'gauge-length' ? 'referenceGaugeLineZ' : 'masterTouchZ'
	]);
}
