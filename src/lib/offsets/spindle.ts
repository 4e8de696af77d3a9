/**
 * Where the spindle is. NIST RS274NGC Interpreter v3 (NISTIR 6556): machine Z = program Z +
 * coordinate-system Z offset + G92 Z offset + tool length offset.
 */
import { fromMicro, toMicro } from './units';
import { requireFinite } from './validate';

/**
 * Machine Z of the controlled point (the tool tip under G43 H, else the gauge line) when the
 * program commands `programZ` in a work offset whose Z is `workZ` with tool length offset
 * `toolOffset`. `g92Z` is the G92 offset, normally 0. Exact decimal sum.
 * @throws OffsetInputError for NaN or infinite arguments
 * @example spindleZ(-10.5, 4.25) // -6.25
 */
export function spindleZ(workZ: number, toolOffset: number, programZ = 0, g92Z = 0): number {
	requireFinite(workZ, 'workZ');
	requireFinite(toolOffset, 'toolOffset');
	requireFinite(programZ, 'programZ');
	requireFinite(g92Z, 'g92Z');
	return fromMicro(toMicro(workZ) + toMicro(toolOffset) + toMicro(programZ) + toMicro(g92Z));
}
