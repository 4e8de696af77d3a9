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

/** Why heights became unknown (the middle of say.heightsUnknown). */
export const why = {
	parameter: 'a position is given by a parameter or expression (#, [ ])',
	macro: 'macro statements (IF, GOTO, WHILE…) may change which blocks run',
	flow: 'o-word flow control (if, while, repeat…) may change which blocks run',
	unknownCode: (code: string) =>
		`${code} is not a code this check knows, so its motion is not known`,
	codeByParameter: 'a G or M code is given by a parameter',
	external: (name: string) =>
		`the subprogram ${name} is not in this file (or not before its call), so its moves are not known`,
	recursion: (name: string) => `the subprogram ${name} calls itself or nests too deep to follow`,
	budget: 'subprogram calls repeat more lines than this check follows',
	code: (code: string, why: string) => `${code} is not followed (${why})`,
	localSub: 'M97 jumps to a block of this program, which this check does not follow',
	lengthParameter: 'the length offset comes from a parameter'
};

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
	toolNoH: (iso: boolean) =>
		iso
			? `G43 has no H number and none was given before, so the control applies whatever H ` +
				`is in force (often H0, no length at all). Add the tool's H number (G43 H_).`
			: `G43 has no H number and no tool was loaded with M6 before it, so it is not clear ` +
				`which length the control applies. Load the tool first or add its H number (G43 H_).`,
	toolOtherHLow: (f: Fmt, h: string, tool: string, own: string, tip: number, safe: number) =>
		`G43 H${h} applies another tool's length while T${tool} is in the spindle (its length is ` +
		`kept in H${own}), and with it the tip goes down to ${f(tip)} above the reference, below ` +
		`the clearance height of ${f(safe)}: the real tip is not where the program thinks. Use ` +
		`H${own}, or correct the tool list if H${h} is right.`,
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
			case ScanProblem.LetterO:
				return `The letter O at column ${col} stands where a number belongs (e.g. "GOO" typed for "G00"); the control will refuse this line. Type the zero.`;
			case ScanProblem.Letters:
				return `${shown(char)} at column ${col} starts letters with no number between them, which is neither a word nor a macro statement; the control will refuse this line. Correct it or put it in a comment.`;
			case ScanProblem.NestedComment:
				return `A "(" at column ${col} opens a comment inside a comment; comments do not nest and the control will refuse or misread this line. Remove the inner parentheses.`;
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
	conflictCancel: (code: string) =>
		`G80 and ${code} on one line: checked as RS274NGC-style, both are motion codes (one ` +
		`modal group) and the control refuses the line. Put G80 on a line of its own, or re-check ` +
		`as ISO-style if this control takes G80 with a motion code.`,
	rapidIntoPart: (
		f: Fmt,
		reg: string,
		tip: number,
		top: number,
		fromAbove: boolean,
		feedWord: boolean
	) =>
		(feedWord
			? `This line gives a feed rate (F) but G0 is still in force, so it moves at rapid. `
			: '') +
		`Rapid down to ${f(tip)} above the reference, below the top of the ${reg} part ` +
		`(${f(top)})` +
		(fromAbove
			? `: the tool goes into the material at full rapid. Stop the rapid above the part ` +
				`(at a clearance or feed height) and feed down with G1.`
			: `, starting from inside it. If that depth is already cut it may be safe; otherwise ` +
				`feed this move (G1).`),
	feedUnderRapid: (f: Fmt, tip: number, safe: number) =>
		`This line gives a feed rate (F) but G0 is still in force, so it moves at rapid down to ` +
		`${f(tip)} above the reference, below the clearance height of ${f(safe)}. Add G1 if the ` +
		`move is meant to feed.`,
	heightsUnknown: (why: string, until: number | null, how: string) =>
		`Heights are not known from here ${until === null ? 'to the end of the program' : `until line ${until} (${how})`}: ${why}. ` +
		`The moves in between are not checked; watch them on the control's graphics or in single ` +
		`block.`,
	overtravelMore: (count: number, last: number) =>
		` The same tool goes past the travel on ${count} more move${count === 1 ? '' : 's'}, the ` +
		`last on line ${last}.`,
	unclosed: (name: string, iso: boolean) =>
		`Subprogram ${iso ? 'O' : 'o'}${name} has no ${iso ? 'M99' : `endsub`} before the end of ` +
		`the file, so none of its lines were checked. Close it, or check whether this is a second ` +
		`main program.`,
	conflict: () =>
		`Two motion codes on one line (e.g. G0 and G1); the control will refuse it. Keep one.`,
	longLine: (max: number) =>
		`This line is longer than ${max} characters, which no program block is: the file may not ` +
		`be a program. Upload the plain-text program file.`,
	notText: () => `The program is not text. Upload the plain-text program file.`,
	internal: (why: string) => `This line could not be checked (${why}); check it by hand.`
};
