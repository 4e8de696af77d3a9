import { toUnits, type ProfilePoint, type ProgramCheckResult } from '$lib/offsets';
import type { CheckInput } from './input';
import { findingLine, KIND_LABEL } from './summary';

/** What the picture of the tip's heights needs (DESIGN.md §8: units beside every value). */
export interface ProfileView {
	units: 'inch' | 'mm';
	resolution: number;
	lines: number;
	points: ProfilePoint[];
	toolChanges: [number, string][];
	/** Tool changes in the program; `toolChanges` holds every `toolChangesPerMark`-th of them. */
	toolChangeCount: number;
	toolChangesPerMark: number;
	/** Each fixture's part top, above the reference, in the machine's units. */
	fixtures: { register: string; top: number }[];
	clearanceHeight: number;
	findings: { line: number; severity: 'stop' | 'caution'; label: string; tip: number | null }[];
	unknownSpans: [number, number | null][];
	movesPerPoint: number;
}

/**
 * The picture's data from a stored check: the engine's downsampled points (every bucket's low
 * and high point is kept, so no low point is lost), each fixture's part top and the clearance
 * height, and every kept finding at its line (at its tip height when the finding gives one).
 * Null for checks stored before the engine kept a profile.
 */
export function profileView(input: CheckInput, result: ProgramCheckResult): ProfileView | null {
	const p = result.profile;
	if (!p) return null;
	const ps = input.programSetup;
	const units = ps.machine.units;
	const conv = (v: number) => toUnits(v, ps.setup.units, units);
	return {
		units,
		resolution: ps.machine.resolution ?? (units === 'inch' ? 0.0001 : 0.001),
		lines: result.stats.lines,
		points: p.points,
		toolChanges: p.toolChanges,
		toolChangeCount: p.toolChangeCount ?? p.toolChanges.length,
		toolChangesPerMark: p.toolChangesPerMark ?? 1,
		fixtures: ps.setup.fixtures.map((f) => ({
			register: f.register,
			top: conv(f.topHeight ?? f.zeroHeight)
		})),
		clearanceHeight: result.stats.clearanceHeight,
		findings: result.findings.flatMap((f) => {
			const line = findingLine(f);
			if (line === null) return [];
			const tip = typeof f.data?.tipHeight === 'number' ? f.data.tipHeight : null;
			return [{ line, severity: f.severity, label: KIND_LABEL[f.kind] ?? f.kind, tip }];
		}),
		unknownSpans: result.stats.unknownSpans ?? [],
		movesPerPoint: p.movesPerPoint
	};
}
