/**
 * The words of every program finding: what is wrong, then what to do. Our own plain
 * sentences; values always with their unit.
 */
import { formatWithUnits } from '../format';
import type { Units } from '../units';
import { ScanProblem, Unmodelled } from './block';
import type { RegisterState } from './schema';

/** Formats a length for a message in the machine's units. */
export type Fmt = (value: number) => string;

/** A formatter for one machine. */
export function formatter(units: Units, resolution: number): Fmt {
	return (v) => (Number.isFinite(v) ? formatWithUnits(v, units, resolution) : 'an unknown height');
}

const UNIT_WORD: Record<Units, string> = { inch: 'inch (G20)', mm: 'mm (G21)' };

/** Visible form of a character code for a message. */
function shown(code: number): string {
	if (code >= 33 && code < 127) return `"${String.fromCharCode(code)}"`;
	return `code ${code.toString(16).toUpperCase().padStart(2, '0')} (hex)`;
}

export const say = {
	lowBetween: (f: Fmt, to: string, from: string, tip: number, safe: number, plane?: number) =>
		`Rapid sideways in ${to} with the tool tip ${f(tip)} above the reference, below the ` +
		`clearance height of ${f(safe)}: the tool is still at the working height of ${from} and ` +
		`can hit a taller fixture or clamp on the way. Lift clear in Z before moving between ` +
		`fixtures${plane === undefined ? '' : ` (${from}'s clearance plane is Z ${f(plane)})`}.`,
	lowDiagonal: (f: Fmt, tip: number, safe: number) =>
		`Rapid moves sideways and down in one block, ending with the tip ${f(tip)} above the ` +
		`reference, below the clearance height of ${f(safe)}. The axes rarely arrive together, so ` +
		`the tool can cross the table low. Move sideways at the clearance plane, then come down.`,
	lowOwnTop: (f: Fmt, reg: string, tip: number, top: number) =>
		`Rapid sideways with the tip ${f(tip)} above the reference, below the top of the ${reg} ` +
		`part or fixture (${f(top)}). Lift above the part before moving sideways, or feed the ` +
		`move (G1) if it is meant to cut.`,
	noCompAfterChange: (tool: string, changeLine: number) =>
		`Z moves after the change to T${tool} (line ${changeLine}) with no tool length offset ` +
		`taken up for it, so the control places the spindle, not the tip, at the programmed Z. ` +
		`Add G43 with this tool's H number before its first Z move.`,
	noComp: () =>
		`Z moves with no tool length offset in force (no G43 H), so the control places the ` +
		`spindle, not the tip, at the programmed Z. Add G43 with the tool's H number before the ` +
		`first Z move.`,
	noCompMaster: (h: string) =>
		`Z moves with no G43, relying on the master tool's H${h} being 0. It works only while the ` +
		`master tool is in the spindle: add G43 H${h} so the program stays right if tools change.`,
	unitsMismatch: (program: Units, machine: Units, name: string) =>
		`The program runs in ${UNIT_WORD[program]} but ${name} keeps its offsets in ${machine}. ` +
		`Post the program in ${machine}, or confirm how this control applies its ${machine} ` +
		`offsets in ${program} before running it.`,
	unitsUnstated: (machine: Units) =>
		`No G20 or G21 before the first move: the program runs in whatever units the control was ` +
		`left in (assumed ${machine} here). Put G20 or G21 near the start.`,
	workMissing: (reg: string, name: string) =>
		`${reg} is not in ${name}'s offset table, so the program would run on whatever that ` +
		`register holds. Measure and set ${reg}, or use a fixture that is set.`,
	workNotInSetup: (reg: string) =>
		`${reg} has an offset on the machine but is not a fixture of this setup, so its heights ` +
		`and clearance are not known here. Check the program belongs to this setup, or add the ` +
		`fixture to it.`,
	workUnsupported: (text: string) =>
		`${text} is not a work offset Datumkeep keeps (G54–G59, G54.1 P1–P48). Change the program ` +
		`to one of the setup's work offsets.`,
	workNoP: () =>
		`G54.1 needs a P number (P1–P48) to say which extended work offset to use. Add the P word.`,
	toolMissing: (h: string) =>
		`H${h} is not in the offset table, so this tool's length is unknown. Measure the tool and ` +
		`set H${h}, or use the H number of a measured tool.`,
	toolNoH: () =>
		`G43 has no H number, so it is not clear which length the control applies. Add the ` +
		`tool's H number (G43 H_).`,
	toolOtherH: (h: string, tool: string, own: string) =>
		`G43 H${h} applies another tool's length while T${tool} is in the spindle (its length is ` +
		`kept in H${own}). Use H${own}, or correct the tool list if H${h} is right.`,
	overtravel: (f: Fmt, z: number, min: number, max: number, name: string) =>
		`The spindle would go to machine Z ${f(z)}, ${z > max ? 'above the top' : 'below the bottom'} ` +
		`of ${name}'s travel (${f(min)} to ${f(max)}). Check this move's Z, the work offset and the ` +
		`tool length: one of them is wrong.`,
	state: (state: RegisterState, what: string) =>
		state === 'unset'
			? `${what} has never been measured on this machine. Measure and set it before running.`
			: state === 'stale-age'
				? `${what} was measured longer ago than the shop's limit. Re-measure it before running.`
				: `${what} was measured before the machine's reference was last re-established. ` +
					`Re-measure it before running.`,
	scan: (kind: ScanProblem, char: number, col: number) => {
		switch (kind) {
			case ScanProblem.NoNumber:
				return `${shown(char)} at column ${col} has no number after it, so the control will refuse this line. Give the word its value or remove it.`;
			case ScanProblem.OpenComment:
				return `A comment opened with "(" at column ${col} is not closed on this line; the control will refuse it. Close it with ")".`;
			case ScanProblem.Duplicate:
				return `${shown(char)} appears twice on this line (again at column ${col}); the control will refuse it or use only one. Keep one.`;
			case ScanProblem.Binary:
				return `This line holds ${shown(char)} at column ${col}, which is not program text: the file may be binary or in an unexpected encoding. Upload the plain-text program.`;
			case ScanProblem.BadNumber:
				return `The number after ${shown(char)} at column ${col} is too large to be a real value; the control will refuse this line. Correct the number.`;
			case ScanProblem.TooManyCodes:
				return `Too many G or M codes on one line for a real block. Split it into several lines.`;
			default:
				return `${shown(char)} at column ${col} is not part of a word or a comment; the control will refuse this line. Remove it or put it in a comment.`;
		}
	},
	unmodelled: (kind: Unmodelled) =>
		kind === Unmodelled.Parameter
			? `Parameters or expressions (#, [ ]) are not followed by this check, so heights from ` +
				`here on may not be known. Check these moves on the control's graphics or in single block.`
			: `Macro statements (IF, GOTO, WHILE…) are not followed by this check; the machine may ` +
				`run the following blocks in another order. Check these moves on the control's graphics ` +
				`or in single block.`,
	gcode: (code: string, why: string) =>
		`${code} is not followed by this check (${why}). Check the moves after it on the control's ` +
		`graphics or in single block.`,
	subprogram: (code: string) =>
		`${code}: called subprograms and macros are not followed here; the called program needs a ` +
		`check of its own.`,
	noMotionMode: () =>
		`Axis words with no motion mode in force (G0, G1, G2, G3 or a drilling cycle): the control ` +
		`will refuse this line or move unexpectedly. Add the G code.`,
	toolChangeNoT: () =>
		`M6 with no T word before it: the check cannot tell which tool is loaded. Put T_ on this ` +
		`line or before it.`,
	conflict: () =>
		`Two motion codes on one line (e.g. G0 and G1); the control will refuse it. Keep one.`,
	longLine: (max: number) =>
		`This line is longer than ${max} characters, which no program block is: the file may not ` +
		`be a program. Upload the plain-text program file.`,
	notText: () => `The program is not text. Upload the plain-text program file.`,
	internal: (why: string) => `This line could not be checked (${why}); check it by hand.`
};
