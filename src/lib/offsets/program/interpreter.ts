/**
 * Follows a program block by block the way a control would, keeping only what decides where
 * the tool tip is in Z: units, distance mode, work offset, tool length offset, the tool in the
 * spindle and the spindle's machine Z. Every move is then checked against the setup.
 *
 * Where the spindle goes: machine Z = program Z + work offset Z + tool length offset
 * (NIST RS274NGC v3, NISTIR 6556, offsets composition; no G92 here). Where the tip is above
 * the reference: spindle machine Z − (R + L_t), the spindle Z at which tool t's tip would
 * touch the reference (DESIGN.md §2).
 */
import { roundToResolution, type Units } from '../units';
import { ABSENT, Block, L, NUMBER, ScanProblem, UNKNOWN, Unmodelled } from './block';
import { CAUTION_WHY, GKind, gKind, gTable, gText, type GTable } from './codes';
import type { FindingCollector } from './collector';
import type { CheckContext, FixtureInfo } from './context';
import { dialectRules, type DialectRules } from './dialect';
import { formatter, say, why, type Fmt } from './messages';
import type { Profile } from './profile';
import { Tally } from './tally';
import type { Finding } from '../findings';

/** Motion mode after a G code the check does not know: moves under it are not followed. */
const UNKNOWN_MOTION = -3;

/** A subprogram call a block asks for (followed by the checker). */
export interface CallRequest {
	name: string;
	repeats: number;
	line: number;
}

const MM_PER_INCH = 25.4;

/** Modal state and the checks run on each move. */
export class Interpreter {
	readonly tally: Tally;
	private readonly f: Fmt;
	private readonly eps: number;
	/** Travel limits with the resolution's tolerance (checkTravel). */
	private readonly zHigh: number;
	private readonly zLow: number;
	/** Fallback R + L − H from the first setup fixture with a table value (see context.ts). */
	private readonly fallbackConstant: number;
	readonly rules: DialectRules;
	private readonly codes: GTable;
	/** Subprogram depth the block runs at (0 = main program), set by the checker. */
	depth = 0;
	/** What the last block asked of the checker. */
	call: CallRequest | null = null;
	/** M99 in a subprogram: return to the caller. */
	returned = false;
	/** M2 / M30 (or M99 in the main program): the main program ended. */
	ended = false;
	/** Tip height per move, downsampled (for the picture); null when not wanted. */
	profile: Profile | null = null;

	// Modal state (NISTIR 6556 §3.4 groups; power-on defaults G17 G54 G90 G49 G80 assumed).
	private motion = -1;
	private absolute = true;
	private programUnits: Units | null = null;
	private factor = 1;
	private register = 'G54';
	private registerChosen = false;
	private workZ = Number.NaN;
	private fixture: FixtureInfo | undefined;
	private comp = false;
	private compH = '';
	private compValue = 0;
	private compSinceChange = true;
	private retractToStart = true;
	private shiftUnknown = false;

	// The tool in the spindle ('' = not known) and its length register value.
	private tool = '';
	private toolOffset = Number.NaN;
	private selectedT = '';
	private toolChangeLine = 0;
	private toolChanged = false;
	private noCompWarned = false;
	private otherHWarned = false;
	/** The H last given (ISO-style: H stays modal, G43 without H uses it). */
	private lastH = '';
	/** Another tool's H in force: a caution that becomes a stop if the tip goes low. */
	private otherH: { line: number; h: string; tool: string } | null = null;
	/** Tool segment (increases at each M6), for overtravel once per tool. */
	private segment = 0;
	private overtravelSeg: {
		segment: number;
		finding: Finding | null;
		count: number;
		last: number;
		message: string;
	} | null = null;
	/** First line of a span whose heights are unknown (0 = heights known) and why. */
	private unknownSince = 0;
	private unknownWhy = '';
	/** How the next known position was reached (for the span's message). */
	private how = 'an absolute Z move';
	/** The last move was a rapid (for the picture). */
	private rapidMove = false;
	private currentLine = 0;
	private unknownMotion = '';
	/** The motion mode is a drilling cycle. */
	private inCycle = false;

	/** Spindle (gauge-line) machine Z; NaN until a move or a known position sets it. */
	private machineZ = Number.NaN;
	/** Work offset that was active when the tip last went below the clearance height. */
	private lowRegister: string | null = null;
	private cycleR = Number.NaN;
	private cycleZ = Number.NaN;
	private cycleStart = Number.NaN;
	private unitsWarned = false;

	constructor(
		private readonly ctx: CheckContext,
		private readonly out: FindingCollector
	) {
		this.f = formatter(ctx.units, ctx.resolution);
		this.eps = ctx.resolution / 2;
		this.zHigh = ctx.zMax + this.eps;
		this.zLow = ctx.zMin - this.eps;
		this.tally = new Tally(ctx.units);
		let c = Number.NaN;
		for (const [reg, fx] of ctx.fixtures) {
			const w = ctx.work.get(reg);
			if (w !== undefined) {
				c = w - fx.zeroHeight;
				break;
			}
		}
		this.fallbackConstant = c;
		this.rules = dialectRules(ctx.dialect);
		this.codes = gTable(ctx.dialect);
	}

	/** Runs one scanned block found on physical line `line`. */
	exec(b: Block, line: number): void {
		this.call = null;
		this.returned = false;
		if (b.percent) return;
		if (b.problem !== ScanProblem.None) {
			// The control refuses the whole block. The words read before the problem are still
			// applied, quietly, so one refused line does not cascade into findings after it.
			this.tally.blocks++;
			this.out.report('parse-error', 'stop', line, () => ({
				message: say.scan(b.problem, b.problemChar, b.problemCol)
			}));
			if (b.words === 0) return;
			this.quietly(b, line);
			return;
		}
		if (b.words === 0) return;
		this.tally.blocks++;
		this.run(b, line);
	}

	/** Runs a block with findings muted (a refused line's words). */
	private quietly(b: Block, line: number): void {
		const was = this.out.muted;
		this.out.muted = true;
		try {
			this.run(b, line);
		} finally {
			this.out.muted = was;
		}
	}

	private run(b: Block, line: number): void {
		this.currentLine = line;
		if (b.unmodelled === Unmodelled.MacroWord) this.loseHeights(line, why.macro);
		else if (b.unknownCode) this.loseHeights(line, why.codeByParameter);

		let motionCode = -2;
		let conflict = false;
		let cancel = false;
		let units: Units | null = null;
		let lengthOn = false;
		let lengthOff = false;
		let work = -1;
		let machineCoords = false;
		let home = false;
		let axesTaken = false;
		let distance = -1;
		let retract = -1;
		let unknownCode = -1;
		const ownGroup = this.rules.cycleCancelOwnGroup;
		for (let i = 0; i < b.gCount; i++) {
			const code = b.g[i];
			switch (gKind(code, this.codes)) {
				case GKind.CycleCancel:
					if (ownGroup) {
						cancel = true;
						break;
					}
				// falls through: RS274NGC puts G80 in the motion group (NISTIR 6556 §3.4 [memory])
				case GKind.Motion:
				case GKind.Cycle:
					if (motionCode !== -2 && motionCode !== code) conflict = true;
					if (motionCode === -2 || code !== 800) motionCode = code;
					break;
				case GKind.Units:
					units = code === 200 ? 'inch' : 'mm';
					break;
				case GKind.Distance:
					distance = code;
					break;
				case GKind.LengthOn:
					lengthOn = true;
					break;
				case GKind.LengthOff:
					lengthOff = true;
					break;
				case GKind.Work:
				case GKind.WorkExtended:
				case GKind.WorkUnsupported:
					work = code;
					break;
				case GKind.MachineCoords:
					machineCoords = true;
					break;
				case GKind.Home:
					home = true;
					break;
				case GKind.Retract:
					retract = code;
					break;
				case GKind.ShiftCancel:
					this.shiftUnknown = false;
					axesTaken = true;
					break;
				case GKind.Caution:
					axesTaken = this.cautionCode(b, code, line) || axesTaken;
					break;
				case GKind.Unknown:
					if (unknownCode < 0) unknownCode = code;
					break;
			}
		}
		if (conflict && !this.out.muted) {
			// The control refuses the line; its other words are applied quietly (no cascade).
			const hasCancel = b.hasG(800);
			this.out.report('parse-error', 'stop', line, () => ({
				message: hasCancel ? say.conflictCancel(gText(motionCode)) : say.conflict()
			}));
			this.quietly(b, line);
			return;
		}

		// Order of execution within a block: NISTIR 6556 §3.8 (T, M6, units, length offset,
		// work offset, distance mode, retract mode, home / machine coordinates, motion).
		if (b.has[L.T] === NUMBER) this.selectedT = toolText(b.val[L.T]);
		else if (b.has[L.T] === UNKNOWN) this.selectedT = '';
		let callM = 0;
		for (let i = 0; i < b.mCount; i++) {
			const m = b.m[i];
			if (m === 60) this.toolChange(line);
			else if (m === 980 || m === 990 || m === 300 || m === 20 || m === 970) callM = m;
		}
		if (units !== null) this.setUnits(units, line);
		if (b.has[L.H] === NUMBER) {
			const h = toolText(b.val[L.H]);
			if (h !== '') this.lastH = h;
		}
		if (lengthOn) this.lengthOffsetOn(b, line);
		else if (lengthOff) this.lengthOffsetOff();
		else if (b.has[L.H] === NUMBER && this.comp) {
			// An H word alone while G43 is in force changes the offset (ISO-style [memory]).
			this.compSinceChange = true;
			this.applyH(b.val[L.H], line);
		}
		if (work >= 0) this.selectWork(b, work, line);
		if (this.ctx.radius !== undefined && b.has[L.D] === NUMBER && (b.hasG(410) || b.hasG(420)))
			this.cutterComp(b.val[L.D], line);
		if (distance >= 0) this.absolute = distance === 900;
		if (retract >= 0) this.retractToStart = retract === 980;
		if (cancel) this.setMotion(-1);
		if (unknownCode >= 0) {
			// Not a code the check knows: it may be a motion of its own (G33.1, G12, G150…), so
			// nothing it moves is followed until a known motion code and an absolute Z.
			this.setMotion(UNKNOWN_MOTION);
			this.unknownMotion = gText(unknownCode);
			this.loseHeights(line, why.unknownCode(this.unknownMotion));
		} else if (motionCode !== -2) {
			const wasCycle = this.inCycle;
			this.setMotion(motionCode === 800 ? -1 : motionCode);
			if (this.inCycle && !wasCycle) this.cycleStart = this.machineZ;
		}
		if (!axesTaken) this.axes(b, line, home, machineCoords, motionCode);
		if (callM !== 0) this.mCall(b, callM, line);
	}

	/** Sets the motion mode and whether it is a drilling cycle (looked up once, not per move). */
	private setMotion(motion: number): void {
		if (motion === this.motion) return;
		this.motion = motion;
		this.inCycle = this.isCycle(motion);
	}

	private isCycle(motion: number): boolean {
		return motion >= 0 && gKind(motion, this.codes) === GKind.Cycle;
	}

	private axes(b: Block, line: number, home: boolean, machineCoords: boolean, code: number): void {
		const hasAxis = b.has[L.X] !== ABSENT || b.has[L.Y] !== ABSENT || b.has[L.Z] !== ABSENT;
		if (home) return this.goHome(b, line);
		const cycle = this.inCycle;
		if (!hasAxis && !(cycle && b.has[L.R] !== ABSENT)) return;
		if (this.motion === UNKNOWN_MOTION) {
			this.tally.moves++;
			this.loseHeights(line, why.unknownCode(this.unknownMotion));
			return;
		}
		if (this.motion < 0) {
			this.out.report('parse-error', 'caution', line, () => ({ message: say.noMotionMode() }));
			if (b.has[L.Z] !== ABSENT) this.machineZ = Number.NaN;
			return;
		}
		if (b.has[L.Z] === UNKNOWN) this.loseHeights(line, why.parameter);
		this.beforeFirstMove(line);
		if (machineCoords) return this.machineMove(b, line);
		if (cycle) return this.cycleMove(b, line);
		this.workMove(b, line, code === -2);
	}

	/** M98 / M99 / M30 / M2 / M97 of a block, after its motion (ISO-style order [memory]). */
	private mCall(b: Block, m: number, line: number): void {
		if (m === 300 || m === 20) {
			if (this.depth === 0) this.ended = true;
			return;
		}
		if (m === 990) {
			if (this.depth > 0) this.returned = true;
			else this.ended = true;
			return;
		}
		if (m === 970) return this.loseHeights(line, why.localSub);
		// M98 P_ (L_ or K_ repeats) calls subprogram O_ [memory].
		if (b.has[L.P] !== NUMBER || !Number.isInteger(b.val[L.P]) || b.val[L.P] < 0)
			return this.loseHeights(line, why.external('named on this line'));
		const reps = b.has[L.L] === NUMBER ? b.val[L.L] : b.has[L.K] === NUMBER ? b.val[L.K] : 1;
		this.call = {
			name: String(b.val[L.P]),
			repeats: Number.isInteger(reps) && reps >= 0 ? reps : 1,
			line
		};
	}

	/**
	 * Heights are no longer known from `line`: the spindle's Z is forgotten and one span opens,
	 * to be reported when a known position is reached again (or at the end).
	 */
	loseHeights(line: number, reason: string): void {
		this.machineZ = Number.NaN;
		if (this.unknownSince === 0) {
			this.unknownSince = line;
			this.unknownWhy = reason;
		}
	}

	/** Closes a span at `line` (or at the end when `line` is null). */
	private closeSpan(line: number | null): void {
		const from = this.unknownSince;
		if (from === 0) return;
		this.unknownSince = 0;
		const reason = this.unknownWhy;
		const how = this.how;
		this.out.report('heights-unknown', 'caution', from, () => ({
			message: say.heightsUnknown(reason, line, how),
			data: line === null ? { from, until: 'end' } : { from, until: line }
		}));
	}

	/** Called at the end of the program: open spans and counts are written out. */
	finish(): void {
		this.closeSpan(null);
		this.closeOvertravel();
	}

	// ---- tools and offsets -------------------------------------------------------------

	private toolChange(line: number): void {
		if (this.selectedT === '') {
			this.out.report('parse-error', 'caution', line, () => ({ message: say.toolChangeNoT() }));
			this.setTool('');
		} else this.setTool(this.selectedT);
		this.toolChanged = true;
		this.toolChangeLine = line;
		this.compSinceChange = false;
		this.noCompWarned = false;
		this.otherHWarned = false;
		this.otherH = null;
		this.closeOvertravel();
		this.segment++;
		this.profile?.toolChange(line, this.tool);
		// The spindle goes up to the tool-change position (common shop practice: Z home).
		this.machineZ = this.ctx.toolChangeZ;
		this.how = 'a tool change';
		this.rapidMove = true;
		this.afterPosition(false, line);
	}

	private setTool(tool: string): void {
		this.tool = tool === '0' ? '' : tool;
		if (this.tool === '') {
			this.toolOffset = Number.NaN;
			this.retouch();
			return;
		}
		this.tally.tool(this.tool);
		this.toolOffset = this.ctx.tools.get(this.ownH(this.tool)) ?? Number.NaN;
		this.retouch();
	}

	private ownH(tool: string): string {
		return this.ctx.toolRegisters.get(tool) ?? tool;
	}

	private lengthOffsetOn(b: Block, line: number): void {
		// NISTIR 6556 §3.5.11: G43 H_ takes tool-table entry H; H0 means a zero offset.
		this.compSinceChange = true;
		this.noCompWarned = false;
		if (b.has[L.H] === NUMBER) return this.applyH(b.val[L.H], line);
		if (b.has[L.H] === ABSENT) {
			// G43 without H: ISO-style keeps the H in force, RS274NGC-style takes the loaded
			// tool's (dialect.ts, g43WithoutH).
			const iso = this.rules.g43WithoutH === 'last-h';
			const h = iso ? this.lastH : this.tool === '' ? '' : this.ownH(this.tool);
			if (h !== '') return this.applyH(Number(h), line);
			this.comp = true;
			this.compH = '?';
			this.compValue = Number.NaN;
			this.out.report('unknown-tool-offset', 'stop', line, () => ({ message: say.toolNoH(iso) }));
			return;
		}
		this.comp = true;
		this.compH = '?';
		this.compValue = Number.NaN;
		this.loseHeights(line, why.lengthParameter);
	}

	/**
	 * G41/G42 D_ (issue 20): the D register's radius must be recorded, and its states (stale,
	 * never measured) are repeated like an H's. D0 cancels the offset (NISTIR 6556 cutter radius
	 * compensation, from memory). Each D is reported once per program.
	 */
	private cutterComp(value: number, line: number): void {
		const d = toolText(value);
		if (d === '' || d === '0') return;
		if (!this.ctx.radius!.has(d)) {
			if (this.tally.once(`D-missing:${d}`))
				this.out.report('unset', 'stop', line, () => ({
					message: `D${d} is called for cutter compensation (G41/G42) but its radius was never recorded on ${this.ctx.machineName}. Record it before running.`,
					data: { d }
				}));
			return;
		}
		for (const state of this.ctx.radiusStatus.get(d) ?? []) {
			if (this.tally.once(`D-${state}:${d}`))
				this.out.report(state, state === 'unset' ? 'stop' : 'caution', line, () => ({
					message: say.state(state, `D${d} (cutter radius)`),
					data: { d }
				}));
		}
	}

	private lengthOffsetOff(): void {
		this.otherH = null;
		this.comp = false;
		this.compH = '';
		this.compValue = 0;
	}

	private applyH(value: number, line: number): void {
		const h = toolText(value);
		if (h === '0' || h === '') {
			this.lengthOffsetOff();
			return;
		}
		this.comp = true;
		this.compH = h;
		this.tally.h(h);
		const v = this.ctx.tools.get(h);
		this.compValue = v ?? Number.NaN;
		if (v === undefined) {
			if (this.tally.once(`H-missing:${h}`))
				this.out.report('unknown-tool-offset', 'stop', line, () => ({
					message: say.toolMissing(h),
					data: { h }
				}));
		}
		for (const state of this.ctx.toolStatus.get(h) ?? []) {
			if (this.tally.once(`H-${state}:${h}`))
				this.out.report(state, state === 'unset' ? 'stop' : 'caution', line, () => ({
					message: say.state(state, `H${h}`),
					data: { h }
				}));
		}
		if (this.tool === '') {
			// No M6 seen: take the tool in the spindle to be the one this H belongs to.
			this.setTool(h);
			this.otherH = null;
		} else if (this.ownH(this.tool) !== h) {
			// Another tool's length: a caution, made a stop if the tip then goes below the
			// clearance height (afterPosition), where the difference can put it into the part.
			const tool = this.tool;
			const own = this.ownH(tool);
			if (!this.otherHWarned) {
				this.otherHWarned = true;
				this.out.report('unknown-tool-offset', 'caution', line, () => ({
					message: say.toolOtherH(h, tool, own),
					data: { h, tool }
				}));
			}
			if (this.otherH === null) this.otherH = { line, h, tool };
		} else this.otherH = null;
	}

	private selectWork(b: Block, code: number, line: number): void {
		let reg: string | null = null;
		let text = gText(code);
		if (gKind(code) === GKind.Work) reg = text;
		else if (gKind(code) === GKind.WorkExtended) {
			const p = b.val[L.P];
			if (b.has[L.P] !== NUMBER) {
				this.register = 'G54.1';
				this.registerChosen = true;
				this.workZ = Number.NaN;
				this.fixture = undefined;
				this.retouch();
				this.out.report('unknown-work-offset', 'stop', line, () => ({ message: say.workNoP() }));
				return;
			}
			text = `G54.1 P${p}`;
			if (Number.isInteger(p) && p >= 1 && p <= 48) reg = text;
		}
		this.registerChosen = true;
		if (reg === null) {
			this.register = text;
			this.workZ = Number.NaN;
			this.fixture = undefined;
			this.retouch();
			if (this.tally.once(`W-bad:${text}`))
				this.out.report('unknown-work-offset', 'stop', line, () => ({
					message: say.workUnsupported(text),
					data: { register: text }
				}));
			return;
		}
		this.useRegister(reg, line);
	}

	private useRegister(reg: string, line: number): void {
		this.register = reg;
		this.tally.work(reg);
		const w = this.ctx.work.get(reg);
		this.workZ = w ?? Number.NaN;
		this.fixture = this.ctx.fixtures.get(reg);
		this.retouch();
		if (w === undefined) {
			if (this.tally.once(`W-missing:${reg}`))
				this.out.report('unknown-work-offset', 'stop', line, () => ({
					message: say.workMissing(reg, this.ctx.machineName),
					data: { register: reg }
				}));
		} else if (!this.fixture) {
			if (this.tally.once(`W-setup:${reg}`))
				this.out.report('unknown-work-offset', 'caution', line, () => ({
					message: say.workNotInSetup(reg),
					data: { register: reg }
				}));
		}
		for (const state of this.ctx.workStatus.get(reg) ?? []) {
			if (this.tally.once(`W-${state}:${reg}`))
				this.out.report(state, state === 'unset' ? 'stop' : 'caution', line, () => ({
					message: say.state(state, reg),
					data: { register: reg }
				}));
		}
	}

	private setUnits(units: Units, line: number): void {
		this.programUnits = units;
		this.tally.units(units);
		this.factor = units === this.ctx.units ? 1 : units === 'inch' ? MM_PER_INCH : 1 / MM_PER_INCH;
		if (units !== this.ctx.units && this.tally.once(`units:${units}`)) {
			this.out.report('units-mismatch', 'stop', line, () => ({
				message: say.unitsMismatch(units, this.ctx.units, this.ctx.machineName),
				data: { program: units, machine: this.ctx.units }
			}));
		}
	}

	private cautionCode(b: Block, code: number, line: number): boolean {
		// G92 / G52 with a Z word shift program zero: heights after it cannot be trusted.
		const shifts = code === 920 || code === 520;
		const zShift = b.has[L.Z] !== ABSENT && !(b.has[L.Z] === NUMBER && b.val[L.Z] === 0);
		if (shifts) {
			this.shiftUnknown = code === 520 ? zShift : this.shiftUnknown || zShift;
			if (zShift) this.loseHeights(line, why.code(gText(code), CAUTION_WHY[code]));
		} else if (code === 100 || code === 431) {
			// G10 writes offsets; G43.1 a length the setup does not hold: heights go on, with a
			// caution.
			this.out.report('parse-error', 'caution', line, () => ({
				message: say.gcode(gText(code), CAUTION_WHY[code]),
				data: { reason: 'not-followed' }
			}));
		} else {
			if (code === 510) this.shiftUnknown = true;
			this.loseHeights(line, why.code(gText(code), CAUTION_WHY[code]));
		}
		const probe = code >= 310 && code <= 385;
		if (probe || code === 300) {
			this.machineZ = Number.NaN;
			return true;
		}
		// These take the block's axis words for themselves: no motion is made with them.
		return code === 100 || code === 920 || code === 520 || code === 650 || code === 660;
	}

	// ---- moves ---------------------------------------------------------------------------

	private beforeFirstMove(line: number): void {
		if (!this.registerChosen) {
			// Power-on work offset is G54 (NISTIR 6556: coordinate system 1 at start-up).
			this.registerChosen = true;
			this.useRegister('G54', line);
		}
		if (this.programUnits === null && !this.unitsWarned) {
			this.unitsWarned = true;
			this.out.report('units-mismatch', 'caution', line, () => ({
				message: say.unitsUnstated(this.ctx.units)
			}));
		}
	}

	/** Spindle machine Z for program Z `z` (machine units) in the current work offset. */
	private toMachine(z: number): number {
		if (this.shiftUnknown) return Number.NaN;
		return z + this.workZ + (this.comp ? this.compValue : 0);
	}

	private zTarget(b: Block, from: number): number {
		if (b.has[L.Z] === UNKNOWN) return Number.NaN;
		const z = b.val[L.Z] * this.factor;
		return this.absolute ? this.toMachine(z) : from + z;
	}

	private xyMoves(b: Block): boolean {
		const x = b.has[L.X];
		const y = b.has[L.Y];
		if (this.absolute) return x !== ABSENT || y !== ABSENT;
		return (
			x === UNKNOWN ||
			y === UNKNOWN ||
			(x === NUMBER && b.val[L.X] !== 0) ||
			(y === NUMBER && b.val[L.Y] !== 0)
		);
	}

	private workMove(b: Block, line: number, modal: boolean): void {
		const zGiven = b.has[L.Z] !== ABSENT;
		const from = this.machineZ;
		const end = zGiven ? this.zTarget(b, from) : from;
		if (zGiven) this.checkLengthComp(line);
		const rapid = this.motion === 0;
		if (zGiven && this.absolute) this.how = 'an absolute Z move';
		this.moveTo(line, rapid, this.xyMoves(b), end, zGiven, true);
		if (rapid && zGiven) this.checkPlunge(line, from, end, modal && b.has[L.F] !== ABSENT);
	}

	private machineMove(b: Block, line: number): void {
		// G53: machine coordinates for this block only, absolute even under G91 (NISTIR 6556
		// §3.5.12); Z here is the spindle's machine Z with no offsets ([memory] on ISO-style).
		const zGiven = b.has[L.Z] !== ABSENT;
		const end = !zGiven
			? this.machineZ
			: b.has[L.Z] === UNKNOWN
				? Number.NaN
				: b.val[L.Z] * this.factor;
		if (zGiven) this.how = 'a move in machine coordinates';
		this.moveTo(
			line,
			this.motion === 0,
			b.has[L.X] !== ABSENT || b.has[L.Y] !== ABSENT,
			end,
			zGiven,
			false
		);
	}

	private goHome(b: Block, line: number): void {
		// G28: rapid through the intermediate point given by the axis words, then home (NISTIR
		// 6556 §3.5.8); only the axes given move, all of them when none is given (ISO-style
		// controls and later RS274NGC interpreters [memory]). Z home is the top of travel
		// (common shop practice).
		this.beforeFirstMove(line);
		const any = b.has[L.X] !== ABSENT || b.has[L.Y] !== ABSENT || b.has[L.Z] !== ABSENT;
		const zGiven = b.has[L.Z] !== ABSENT;
		if (b.has[L.Z] === UNKNOWN) this.loseHeights(line, why.parameter);
		const mid = zGiven ? this.zTarget(b, this.machineZ) : this.machineZ;
		const xy = !any || this.xyMoves(b);
		this.tally.moves++;
		if (zGiven) this.checkTravel(line, mid);
		if (xy) this.checkTraverse(line, this.machineZ, mid);
		const zHome = zGiven || !any;
		this.machineZ = zHome ? this.ctx.zMax : mid;
		if (zHome) this.how = 'a return to home';
		this.rapidMove = true;
		this.afterPosition(false, line);
	}

	private cycleMove(b: Block, line: number): void {
		// Drilling cycles (dialect.ts, cycles) followed as Z moves (NISTIR 6556 §3.5.16–3.5.20):
		// rapid to the hole at the current height (first up to R if below it), rapid to R, feed
		// to Z, back to R (G99) or to the height before the cycle (G98). R and Z stay in force.
		if (b.has[L.R] !== ABSENT)
			this.cycleR = b.has[L.R] === NUMBER ? b.val[L.R] * this.factor : Number.NaN;
		if (b.has[L.Z] !== ABSENT)
			this.cycleZ = b.has[L.Z] === NUMBER ? b.val[L.Z] * this.factor : Number.NaN;
		if (b.has[L.R] === UNKNOWN) this.loseHeights(line, why.parameter);
		const start = this.machineZ;
		const r = this.absolute ? this.toMachine(this.cycleR) : start + this.cycleR;
		const bottom = this.absolute ? this.toMachine(this.cycleZ) : r + this.cycleZ;
		const level = start < r ? r : start;
		this.tally.moves++;
		this.checkLengthComp(line);
		if (this.xyMoves(b)) this.checkTraverse(line, level, level);
		this.checkTravel(line, r);
		this.checkTravel(line, bottom);
		this.recordTip(r);
		this.recordTip(bottom);
		this.profilePoint(line, bottom, false);
		const back = this.retractToStart && this.cycleStart > r ? this.cycleStart : r;
		this.machineZ = back;
		this.how = 'a drilling cycle';
		this.rapidMove = true;
		this.afterPosition(true, line);
	}

	private moveTo(
		line: number,
		rapid: boolean,
		xy: boolean,
		end: number,
		zGiven: boolean,
		inWork: boolean
	): void {
		this.tally.moves++;
		if (zGiven) this.checkTravel(line, end);
		if (rapid && xy) this.checkTraverse(line, this.machineZ, end);
		this.machineZ = end;
		this.rapidMove = rapid;
		this.afterPosition(inWork, line);
	}

	// ---- checks ------------------------------------------------------------------------

	/**
	 * R + L_t of the tool in the spindle: the spindle Z with its tip on the reference. Worked
	 * out again only when the tool, its offset or the work offset changes (retouch), not per move.
	 */
	private touch = Number.NaN;

	/** Works out `touch` again; called wherever toolOffset, workZ or fixture is set. */
	private retouch(): void {
		let c = this.ctx.conventionConstant;
		if (Number.isNaN(c)) {
			c =
				this.fixture && !Number.isNaN(this.workZ)
					? this.workZ - this.fixture.zeroHeight
					: this.fallbackConstant;
		}
		this.touch = this.toolOffset + c;
	}

	/** A length for finding data, at the machine's increment (data is shown on screens). */
	private r(v: number): number {
		return Number.isFinite(v) && Math.abs(v) < 1e9 ? roundToResolution(v, this.ctx.resolution) : v;
	}

	private tipAt(z: number): number {
		return z - this.touch;
	}

	private recordTip(z: number): void {
		if (this.tool !== '') this.tally.tip(this.tool, this.tipAt(z));
	}

	private profilePoint(line: number, z: number, rapid: boolean): void {
		if (this.profile === null) return;
		const tip = this.tipAt(z);
		if (!Number.isNaN(tip)) this.profile.point(line, tip, rapid);
	}

	private afterPosition(inWork: boolean, line: number): void {
		if (this.unknownSince !== 0 && !Number.isNaN(this.machineZ) && !this.shiftUnknown)
			this.closeSpan(line);
		const tip = this.tipAt(this.machineZ);
		if (Number.isNaN(tip)) return;
		if (this.profile !== null) this.profile.point(line, tip, this.rapidMove);
		if (tip >= this.ctx.safeHeight - this.eps) this.lowRegister = null;
		else {
			if (this.lowRegister === null) this.lowRegister = this.register;
			if (this.otherH !== null && inWork) this.otherHLow(tip);
		}
		if (inWork && this.tool !== '') this.tally.tip(this.tool, tip);
	}

	/** Another tool's H and the tip below the clearance height: the caution becomes a stop. */
	private otherHLow(tip: number): void {
		const o = this.otherH!;
		this.otherH = null;
		const own = this.ownH(o.tool);
		const safe = this.ctx.safeHeight;
		this.out.upgrade('unknown-tool-offset', o.line, () => ({
			message: say.toolOtherHLow(this.f, o.h, o.tool, own, tip, safe),
			data: { h: o.h, tool: o.tool, tipHeight: this.r(tip), clearanceHeight: this.r(safe) }
		}));
	}

	private checkTravel(line: number, z: number): void {
		// Small, so it is inlined into every move: the rare overtravel is its own function.
		// A height not known (NaN) passes neither test.
		if (z > this.zHigh || z < this.zLow) this.overtravel(line, z);
	}

	private overtravel(line: number, z: number): void {
		// Z homes at the top of travel (0) and reads negative below it (common shop practice).
		// Reported once per tool (M6 to M6) with a count of the moves, so a program with a wrong
		// offset gives one finding per tool, not one per move.
		const { zMin, zMax } = this.ctx;
		const seg = this.overtravelSeg;
		if (seg !== null && seg.segment === this.segment) {
			seg.count++;
			seg.last = line;
			return;
		}
		this.closeOvertravel();
		const message = say.overtravel(this.f, z, zMin, zMax, this.ctx.machineName);
		const finding = this.out.report('overtravel', 'stop', line, () => ({
			message,
			data: { machineZ: this.r(z) }
		}));
		this.overtravelSeg = { segment: this.segment, finding, count: 0, last: line, message };
	}

	/** Writes the count of further overtravel moves into the tool's finding. */
	private closeOvertravel(): void {
		const seg = this.overtravelSeg;
		this.overtravelSeg = null;
		if (seg === null || seg.count === 0 || seg.finding === null) return;
		seg.finding.message = seg.message + say.overtravelMore(seg.count, seg.last);
		seg.finding.data = { ...seg.finding.data, moreMoves: seg.count, lastLine: seg.last };
	}

	/**
	 * A rapid straight down into the part: a G0 ending below the top of the active fixture's
	 * part, or a line with a feed rate under modal G0 ending below the clearance height. The
	 * fixture a move is over is taken to be the active work offset's (common shop practice:
	 * one work offset per fixture).
	 */
	private checkPlunge(line: number, from: number, to: number, feedWord: boolean): void {
		const end = this.tipAt(to);
		if (Number.isNaN(end)) return;
		const start = this.tipAt(from);
		if (!Number.isNaN(start) && end >= start - this.eps) return;
		const fx = this.fixture;
		if (fx && end < fx.topHeight - this.eps) {
			const fromAbove = Number.isNaN(start) || start >= fx.topHeight - this.eps;
			const reg = this.register;
			this.out.report('rapid-into-part', fromAbove ? 'stop' : 'caution', line, () => ({
				message: say.rapidIntoPart(this.f, reg, end, fx.topHeight, fromAbove, feedWord),
				data: { tipHeight: this.r(end), topHeight: this.r(fx.topHeight) }
			}));
			return;
		}
		const safe = this.ctx.safeHeight;
		if (feedWord && end < safe - this.eps)
			this.out.report('rapid-into-part', 'caution', line, () => ({
				message: say.feedUnderRapid(this.f, end, safe),
				data: { tipHeight: this.r(end), clearanceHeight: this.r(safe) }
			}));
	}

	private checkLengthComp(line: number): void {
		// NISTIR 6556 §2.1.2.3: with no length offset the controlled point is the gauge line.
		if (this.comp && this.compH !== '' && this.compSinceChange) return;
		if (this.noCompWarned) return;
		this.noCompWarned = true;
		const master = this.ctx.masterTool;
		if (
			!this.comp &&
			this.ctx.convention === 'master-tool' &&
			master !== undefined &&
			this.tool !== '' &&
			this.ownH(this.tool) === master
		) {
			this.out.report('no-length-comp', 'caution', line, () => ({
				message: say.noCompMaster(master)
			}));
			return;
		}
		this.out.report('no-length-comp', 'stop', line, () => ({
			message: this.toolChanged
				? say.noCompAfterChange(this.tool || '?', this.toolChangeLine)
				: say.noComp()
		}));
	}

	private checkTraverse(line: number, from: number, to: number): void {
		// Retract clear in Z before moving between fixtures: common shop practice. The height
		// that is clear is the clearance plane (DESIGN.md §4, clearancePlanes).
		const a = this.tipAt(from);
		const e = this.tipAt(to);
		const low = Number.isNaN(a) ? e : Number.isNaN(e) ? a : Math.min(a, e);
		if (Number.isNaN(low)) return;
		const safe = this.ctx.safeHeight;
		if (low >= safe - this.eps) return;
		if (this.lowRegister !== null && this.lowRegister !== this.register) {
			const lowReg = this.lowRegister;
			const reg = this.register;
			this.out.report('low-traverse', 'stop', line, () => ({
				message: say.lowBetween(this.f, reg, lowReg, low, safe, this.ctx.planes[lowReg]),
				data: {
					tipHeight: this.r(low),
					clearanceHeight: this.r(safe),
					from: lowReg,
					to: reg
				}
			}));
		} else if (a >= safe - this.eps && e < safe - this.eps) {
			this.out.report('low-traverse', 'caution', line, () => ({
				message: say.lowDiagonal(this.f, e, safe),
				data: { tipHeight: this.r(e), clearanceHeight: this.r(safe) }
			}));
		} else if (this.fixture && low < this.fixture.topHeight - this.eps) {
			const top = this.fixture.topHeight;
			const reg = this.register;
			this.out.report('low-traverse', 'caution', line, () => ({
				message: say.lowOwnTop(this.f, reg, low, top),
				data: { tipHeight: this.r(low), topHeight: this.r(top) }
			}));
		}
	}
}

/** A T or H number as text ("3"), '' when it is not a whole number ≥ 0. */
function toolText(v: number): string {
	if (!(Number.isInteger(v) && v >= 0 && v < 1e9)) return '';
	if (v >= TEXT_CACHE) return String(v);
	// The same few numbers come back at every tool change: one string each, made once.
	return (NUMBER_TEXT[v] ??= String(v));
}

const TEXT_CACHE = 1000;
const NUMBER_TEXT: string[] = [];
