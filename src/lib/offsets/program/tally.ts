/**
 * What a program uses, counted as it is read: lines, moves, tools, H numbers, work offsets,
 * units and the tip's Z range per tool. Every set is capped so a hostile file cannot grow it.
 */
import type { Units } from '../units';

/** Most distinct tools, H numbers, work offsets or one-time notes remembered. */
export const TALLY_CAP = 10_000;

/** Tip height range of one tool, above the reference, in machine units. */
export interface TipRange {
	min: number;
	max: number;
}

/** Running counts for stats. */
export class Tally {
	lines = 0;
	blocks = 0;
	moves = 0;
	readonly tools = new Set<string>();
	readonly hs = new Set<string>();
	readonly registers = new Set<string>();
	readonly unitsSeen = new Set<Units>();
	readonly tips = new Map<string, TipRange>();
	private readonly notes = new Set<string>();
	/** A set reached its cap and stopped growing. */
	capped = false;

	constructor(readonly machineUnits: Units) {}

	private add(set: Set<string>, value: string): void {
		if (set.has(value)) return;
		if (set.size >= TALLY_CAP) {
			this.capped = true;
			return;
		}
		set.add(value);
	}

	tool(t: string): void {
		this.add(this.tools, t);
	}

	h(h: string): void {
		this.add(this.hs, h);
	}

	work(register: string): void {
		this.add(this.registers, register);
	}

	units(u: Units): void {
		this.unitsSeen.add(u);
	}

	/** True the first time `key` is seen: for findings given once per register. */
	once(key: string): boolean {
		if (this.notes.has(key)) return false;
		if (this.notes.size >= TALLY_CAP) {
			this.capped = true;
			return true;
		}
		this.notes.add(key);
		return true;
	}

	private lastTool = '';
	private lastRange: TipRange | undefined;

	/** Widens tool `t`'s tip range by `height` (ignored when unknown). */
	tip(t: string, height: number): void {
		if (Number.isNaN(height)) return;
		// The same tool moves thousands of times in a row: skip the map look-up for it.
		let r = t === this.lastTool ? this.lastRange : this.tips.get(t);
		if (r === undefined) {
			if (this.tips.size >= TALLY_CAP) return;
			r = { min: height, max: height };
			this.tips.set(t, r);
		}
		this.lastTool = t;
		this.lastRange = r;
		if (height < r.min) r.min = height;
		if (height > r.max) r.max = height;
	}
}
