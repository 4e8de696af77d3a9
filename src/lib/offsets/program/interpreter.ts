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
import { CAUTION_WHY, GKind, gKind, gText } from './codes';
import type { FindingCollector } from './collector';
import type { CheckContext, FixtureInfo } from './context';
import { formatter, say, type Fmt } from './messages';
import { Tally } from './tally';

const MM_PER_INCH = 25.4;

/** Modal state and the checks run on each move. */
export class Interpreter {
	readonly tally: Tally;
	private readonly f: Fmt;
	private readonly eps: number;
	/** Fallback R + L − H from the first setup fixture with a table value (see context.ts). */
	private readonly fallbackConstant: number;

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
	}

	/** Runs one scanned block found on physical line `line`. */
	exec(b: Block, line: number): void {
		if (b.words === 0 || b.percent) return;
		this.tally.blocks++;
		if (b.problem !== ScanProblem.None) {
			// The control refuses the whole block, so nothing on it is carried out here either.
			if (this.out.wants('parse-error'))
				this.out.add('parse-error', 'stop', line, say.scan(b.problem, b.problemChar, b.problemCol));
			return;
		}
		if (b.unmodelled !== Unmodelled.None && this.out.wants('parse-error'))
			this.out.add('parse-error', 'caution', line, say.unmodelled(b.unmodelled), {
				reason: 'not-followed'
			});

		let motionCode = -2;
		let conflict = false;
		let units: Units | null = null;
		let lengthOn = false;
		let lengthOff = false;
		let work = -1;
		let machineCoords = false;
		let home = false;
		let axesTaken = false;
		let distance = -1;
		let retract = -1;
		for (let i = 0; i < b.gCount; i++) {
			const code = b.g[i];
			switch (gKind(code)) {
				case GKind.Motion:
				case GKind.Cycle:
				case GKind.CycleCancel:
					if (motionCode !== -2 && motionCode !== code) conflict = true;
					motionCode = code;
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
					if (this.out.wants('parse-error'))
						this.out.add(
							'parse-error',
							'caution',
							line,
							say.gcode(gText(code), 'not a code it knows'),
							{
								reason: 'not-followed'
							}
						);
					break;
			}
		}
		if (conflict) {
			if (this.out.wants('parse-error')) this.out.add('parse-error', 'stop', line, say.conflict());
			return;
		}

		// Order of execution within a block: NISTIR 6556 §3.8 (T, M6, units, length offset,
		// work offset, distance mode, retract mode, home / machine coordinates, motion).
		if (b.has[L.T] === NUMBER) this.selectedT = toolText(b.val[L.T]);
		else if (b.has[L.T] === UNKNOWN) this.selectedT = '';
		for (let i = 0; i < b.mCount; i++) {
			const m = b.m[i];
			if (m === 60) this.toolChange(line);
			else if (m === 980 && this.out.wants('parse-error'))
				this.out.add('parse-error', 'caution', line, say.subprogram('M98'), {
					reason: 'not-followed'
				});
		}
		if (units !== null) this.setUnits(units, line);
		if (lengthOn) this.lengthOffsetOn(b, line);
		else if (lengthOff) this.lengthOffsetOff();
		else if (b.has[L.H] === NUMBER && this.comp) {
			// An H word alone while G43 is in force changes the offset (ISO-style [memory]).
			this.compSinceChange = true;
			this.applyH(b.val[L.H], line);
		}
		if (work >= 0) this.selectWork(b, work, line);
		if (distance >= 0) this.absolute = distance === 900;
		if (retract >= 0) this.retractToStart = retract === 980;
		if (motionCode !== -2) {
			const wasCycle = gKind(this.motion) === GKind.Cycle;
			this.motion = motionCode === 800 ? -1 : motionCode;
			if (gKind(this.motion) === GKind.Cycle && !wasCycle) this.cycleStart = this.machineZ;
		}
		if (axesTaken) return;

		const hasAxis = b.has[L.X] !== ABSENT || b.has[L.Y] !== ABSENT || b.has[L.Z] !== ABSENT;
		if (home) return this.goHome(b, line);
		const cycle = gKind(this.motion) === GKind.Cycle;
		if (!hasAxis && !(cycle && b.has[L.R] !== ABSENT)) return;
		if (this.motion < 0) {
			if (this.out.wants('parse-error'))
				this.out.add('parse-error', 'caution', line, say.noMotionMode());
			if (b.has[L.Z] !== ABSENT) this.machineZ = Number.NaN;
			return;
		}
		this.beforeFirstMove(line);
		if (machineCoords) return this.machineMove(b, line);
		if (cycle) return this.cycleMove(b, line);
		this.workMove(b, line);
	}

	// ---- tools and offsets -------------------------------------------------------------

	private toolChange(line: number): void {
		if (this.selectedT === '') {
			if (this.out.wants('parse-error'))
				this.out.add('parse-error', 'caution', line, say.toolChangeNoT());
			this.setTool('');
		} else this.setTool(this.selectedT);
		this.toolChanged = true;
		this.toolChangeLine = line;
		this.compSinceChange = false;
		this.noCompWarned = false;
		this.otherHWarned = false;
		// The spindle goes up to the tool-change position (common shop practice: Z home).
		this.machineZ = this.ctx.toolChangeZ;
		this.afterPosition(false);
	}

	private setTool(tool: string): void {
		this.tool = tool === '0' ? '' : tool;
		if (this.tool === '') {
			this.toolOffset = Number.NaN;
			return;
		}
		this.tally.tool(this.tool);
		this.toolOffset = this.ctx.tools.get(this.ownH(this.tool)) ?? Number.NaN;
	}

	private ownH(tool: string): string {
		return this.ctx.toolRegisters.get(tool) ?? tool;
	}

	private lengthOffsetOn(b: Block, line: number): void {
		// NISTIR 6556 §3.5.11: G43 H_ takes tool-table entry H; H0 means a zero offset.
		this.compSinceChange = true;
		this.noCompWarned = false;
		if (b.has[L.H] === NUMBER) return this.applyH(b.val[L.H], line);
		this.comp = true;
		this.compH = '?';
		this.compValue = Number.NaN;
		if (b.has[L.H] === ABSENT && this.out.wants('unknown-tool-offset'))
			this.out.add('unknown-tool-offset', 'stop', line, say.toolNoH());
	}

	private lengthOffsetOff(): void {
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
			if (this.tally.once(`H-missing:${h}`) && this.out.wants('unknown-tool-offset'))
				this.out.add('unknown-tool-offset', 'stop', line, say.toolMissing(h), { h });
		}
		for (const state of this.ctx.toolStatus.get(h) ?? []) {
			if (this.tally.once(`H-${state}:${h}`) && this.out.wants(state))
				this.out.add(
					state,
					state === 'unset' ? 'stop' : 'caution',
					line,
					say.state(state, `H${h}`),
					{
						h
					}
				);
		}
		if (this.tool === '') {
			// No M6 seen: take the tool in the spindle to be the one this H belongs to.
			this.setTool(h);
		} else if (this.ownH(this.tool) !== h && !this.otherHWarned) {
			this.otherHWarned = true;
			if (this.out.wants('unknown-tool-offset'))
				this.out.add(
					'unknown-tool-offset',
					'caution',
					line,
					say.toolOtherH(h, this.tool, this.ownH(this.tool)),
					{ h, tool: this.tool }
				);
		}
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
				if (this.out.wants('unknown-work-offset'))
					this.out.add('unknown-work-offset', 'stop', line, say.workNoP());
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
			if (this.tally.once(`W-bad:${text}`) && this.out.wants('unknown-work-offset'))
				this.out.add('unknown-work-offset', 'stop', line, say.workUnsupported(text), {
					register: text
				});
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
		if (w === undefined) {
			if (this.tally.once(`W-missing:${reg}`) && this.out.wants('unknown-work-offset'))
				this.out.add(
					'unknown-work-offset',
					'stop',
					line,
					say.workMissing(reg, this.ctx.machineName),
					{
						register: reg
					}
				);
		} else if (!this.fixture) {
			if (this.tally.once(`W-setup:${reg}`) && this.out.wants('unknown-work-offset'))
				this.out.add('unknown-work-offset', 'caution', line, say.workNotInSetup(reg), {
					register: reg
				});
		}
		for (const state of this.ctx.workStatus.get(reg) ?? []) {
			if (this.tally.once(`W-${state}:${reg}`) && this.out.wants(state))
				this.out.add(state, state === 'unset' ? 'stop' : 'caution', line, say.state(state, reg), {
					register: reg
				});
		}
	}

	private setUnits(units: Units, line: number): void {
		this.programUnits = units;
		this.tally.units(units);
		this.factor = units === this.ctx.units ? 1 : units === 'inch' ? MM_PER_INCH : 1 / MM_PER_INCH;
		if (units !== this.ctx.units && this.tally.once(`units:${units}`)) {
			if (this.out.wants('units-mismatch'))
				this.out.add(
					'units-mismatch',
					'stop',
					line,
					say.unitsMismatch(units, this.ctx.units, this.ctx.machineName),
					{ program: units, machine: this.ctx.units }
				);
		}
	}

	private cautionCode(b: Block, code: number, line: number): boolean {
		// G92 / G52 with a Z word shift program zero: heights after it cannot be trusted.
		const shifts = code === 920 || code === 520;
		const zShift = b.has[L.Z] !== ABSENT && !(b.has[L.Z] === NUMBER && b.val[L.Z] === 0);
		if (shifts) this.shiftUnknown = code === 520 ? zShift : this.shiftUnknown || zShift;
		if (code === 510) this.shiftUnknown = true;
		const quiet = shifts && !zShift;
		if (!quiet && this.out.wants('parse-error'))
			this.out.add('parse-error', 'caution', line, say.gcode(gText(code), CAUTION_WHY[code]), {
				reason: 'not-followed'
			});
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
			if (this.out.wants('units-mismatch'))
				this.out.add('units-mismatch', 'caution', line, say.unitsUnstated(this.ctx.units));
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

	private workMove(b: Block, line: number): void {
		const zGiven = b.has[L.Z] !== ABSENT;
		const end = zGiven ? this.zTarget(b, this.machineZ) : this.machineZ;
		if (zGiven) this.checkLengthComp(line);
		this.moveTo(line, this.motion === 0, this.xyMoves(b), end, zGiven, true);
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
		// G28: rapid through the intermediate point given by the axis words, then home; with no
		// axis words every axis goes home (NISTIR 6556 §3.5.8; given-axes-only as on ISO-style
		// controls [memory]). Z home is the top of travel (common shop practice).
		this.beforeFirstMove(line);
		const any = b.has[L.X] !== ABSENT || b.has[L.Y] !== ABSENT || b.has[L.Z] !== ABSENT;
		const zGiven = b.has[L.Z] !== ABSENT;
		const mid = zGiven ? this.zTarget(b, this.machineZ) : this.machineZ;
		const xy = !any || this.xyMoves(b);
		this.tally.moves++;
		if (zGiven) this.checkTravel(line, mid);
		if (xy) this.checkTraverse(line, this.machineZ, mid);
		this.machineZ = zGiven || !any ? this.ctx.zMax : mid;
		this.afterPosition(false);
	}

	private cycleMove(b: Block, line: number): void {
		// Drilling cycles G73 G74 G76 G81–G89 followed as Z moves (NISTIR 6556 §3.5.16–3.5.20):
		// rapid to the hole at the current height (first up to R if below it), rapid to R, feed
		// to Z, back to R (G99) or to the height before the cycle (G98). R and Z stay in force.
		if (b.has[L.R] !== ABSENT)
			this.cycleR = b.has[L.R] === NUMBER ? b.val[L.R] * this.factor : Number.NaN;
		if (b.has[L.Z] !== ABSENT)
			this.cycleZ = b.has[L.Z] === NUMBER ? b.val[L.Z] * this.factor : Number.NaN;
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
		const back = this.retractToStart && this.cycleStart > r ? this.cycleStart : r;
		this.machineZ = back;
		this.afterPosition(true);
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
		this.afterPosition(inWork);
	}

	// ---- checks ------------------------------------------------------------------------

	/** R + L_t of the tool in the spindle: the spindle Z with its tip on the reference. */
	private touchZ(): number {
		let c = this.ctx.conventionConstant;
		if (Number.isNaN(c)) {
			c =
				this.fixture && !Number.isNaN(this.workZ)
					? this.workZ - this.fixture.zeroHeight
					: this.fallbackConstant;
		}
		return this.toolOffset + c;
	}

	/** A length for finding data, at the machine's increment (data is shown on screens). */
	private r(v: number): number {
		return Number.isFinite(v) && Math.abs(v) < 1e9 ? roundToResolution(v, this.ctx.resolution) : v;
	}

	private tipAt(z: number): number {
		return z - this.touchZ();
	}

	private recordTip(z: number): void {
		if (this.tool !== '') this.tally.tip(this.tool, this.tipAt(z));
	}

	private afterPosition(inWork: boolean): void {
		const tip = this.tipAt(this.machineZ);
		if (Number.isNaN(tip)) return;
		if (tip >= this.ctx.safeHeight - this.eps) this.lowRegister = null;
		else if (this.lowRegister === null) this.lowRegister = this.register;
		if (inWork) this.recordTip(this.machineZ);
	}

	private checkTravel(line: number, z: number): void {
		// Z homes at the top of travel (0) and reads negative below it (common shop practice).
		if (Number.isNaN(z)) return;
		const { zMin, zMax } = this.ctx;
		if ((z > zMax + this.eps || z < zMin - this.eps) && this.out.wants('overtravel'))
			this.out.add(
				'overtravel',
				'stop',
				line,
				say.overtravel(this.f, z, zMin, zMax, this.ctx.machineName),
				{
					machineZ: this.r(z)
				}
			);
	}

	private checkLengthComp(line: number): void {
		// NISTIR 6556 §2.1.2.3: with no length offset the controlled point is the gauge line.
		if (this.comp && this.compH !== '' && this.compSinceChange) return;
		if (this.noCompWarned) return;
		this.noCompWarned = true;
		if (!this.out.wants('no-length-comp')) return;
		const master = this.ctx.masterTool;
		if (
			!this.comp &&
			this.ctx.convention === 'master-tool' &&
			master !== undefined &&
			this.tool !== '' &&
			this.ownH(this.tool) === master
		)
			return this.out.add('no-length-comp', 'caution', line, say.noCompMaster(master));
		this.out.add(
			'no-length-comp',
			'stop',
			line,
			this.toolChanged ? say.noCompAfterChange(this.tool || '?', this.toolChangeLine) : say.noComp()
		);
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
			if (this.out.wants('low-traverse'))
				this.out.add(
					'low-traverse',
					'stop',
					line,
					say.lowBetween(
						this.f,
						this.register,
						this.lowRegister,
						low,
						safe,
						this.ctx.planes[this.lowRegister]
					),
					{
						tipHeight: this.r(low),
						clearanceHeight: this.r(safe),
						from: this.lowRegister,
						to: this.register
					}
				);
		} else if (a >= safe - this.eps && e < safe - this.eps) {
			if (this.out.wants('low-traverse'))
				this.out.add('low-traverse', 'caution', line, say.lowDiagonal(this.f, e, safe), {
					tipHeight: this.r(e),
					clearanceHeight: this.r(safe)
				});
		} else if (this.fixture && low < this.fixture.topHeight - this.eps) {
			if (this.out.wants('low-traverse'))
				this.out.add(
					'low-traverse',
					'caution',
					line,
					say.lowOwnTop(this.f, this.register, low, this.fixture.topHeight),
					{
						tipHeight: this.r(low),
						topHeight: this.r(this.fixture.topHeight)
					}
				);
		}
	}
}

/** A T or H number as text ("3"), '' when it is not a whole number ≥ 0. */
function toolText(v: number): string {
	return Number.isInteger(v) && v >= 0 && v < 1e9 ? String(v) : '';
}
