/**
 * The tip's height along a program, downsampled as it is read so memory stays flat: moves fall
 * into at most BUCKETS buckets of consecutive moves; each keeps its lowest and its highest
 * point, so no low point (where crashes happen) is ever dropped from the picture. When the
 * buckets fill, neighbours merge and each bucket covers twice as many moves.
 */

/** Buckets kept; the picture has at most twice as many points. */
export const BUCKETS = 2048;
/**
 * Tool changes kept for the picture. A program with more keeps every 2nd, 4th… change so the
 * marks still span the whole program (and says how many there were).
 */
export const MAX_TOOL_CHANGES = 2000;

/** One point: physical line, tip height above the reference (machine units), 1 = rapid. */
export type ProfilePoint = [line: number, tip: number, rapid: 0 | 1];

/** The picture's data (JSON). */
export interface ProgramProfile {
	points: ProfilePoint[];
	/** [line, tool] of each M6 ('' = no T word); every `toolChangesPerMark`-th when there are many. */
	toolChanges: [number, string][];
	/** Tool changes in the program (kept or not). Absent in results stored before it existed. */
	toolChangeCount?: number;
	/** 1 = every change is in `toolChanges`; 2 = every other one… */
	toolChangesPerMark?: number;
	/** Moves per bucket at the end (1 = every move is a point). */
	movesPerPoint: number;
}

/** Collects points as moves are made. */
export class Profile {
	private readonly minTip = new Float64Array(BUCKETS);
	private readonly minLine = new Int32Array(BUCKETS);
	private readonly minRapid = new Uint8Array(BUCKETS);
	private readonly maxTip = new Float64Array(BUCKETS);
	private readonly maxLine = new Int32Array(BUCKETS);
	private readonly maxRapid = new Uint8Array(BUCKETS);
	private used = 0;
	/** Moves in the bucket being filled. */
	private inBucket = 0;
	private perBucket = 1;
	private readonly changes: [number, string][] = [];
	private changeCount = 0;
	private changeStride = 1;

	/** Adds a move's end point. */
	point(line: number, tip: number, rapid: boolean): void {
		if (this.inBucket === 0) {
			if (this.used === BUCKETS) this.halve();
			const k = this.used++;
			this.minTip[k] = this.maxTip[k] = tip;
			this.minLine[k] = this.maxLine[k] = line;
			this.minRapid[k] = this.maxRapid[k] = rapid ? 1 : 0;
		} else {
			const k = this.used - 1;
			if (tip < this.minTip[k]) {
				this.minTip[k] = tip;
				this.minLine[k] = line;
				this.minRapid[k] = rapid ? 1 : 0;
			}
			if (tip > this.maxTip[k]) {
				this.maxTip[k] = tip;
				this.maxLine[k] = line;
				this.maxRapid[k] = rapid ? 1 : 0;
			}
		}
		if (++this.inBucket === this.perBucket) this.inBucket = 0;
	}

	/** A tool change at `line`. */
	toolChange(line: number, tool: string): void {
		const n = this.changeCount++;
		if (n % this.changeStride !== 0) return;
		if (this.changes.length >= MAX_TOOL_CHANGES) {
			// Full: keep every other change kept so far, and from now on every 2×stride-th.
			let k = 0;
			for (let i = 0; i < this.changes.length; i += 2) this.changes[k++] = this.changes[i];
			this.changes.length = k;
			this.changeStride *= 2;
			if (n % this.changeStride !== 0) return;
		}
		this.changes.push([line, tool]);
	}

	/** Merges neighbouring buckets: each then covers twice as many moves. */
	private halve(): void {
		for (let i = 0; i < BUCKETS / 2; i++) {
			const a = 2 * i;
			const b = a + 1;
			const lo = this.minTip[b] < this.minTip[a] ? b : a;
			const hi = this.maxTip[b] > this.maxTip[a] ? b : a;
			this.minTip[i] = this.minTip[lo];
			this.minLine[i] = this.minLine[lo];
			this.minRapid[i] = this.minRapid[lo];
			this.maxTip[i] = this.maxTip[hi];
			this.maxLine[i] = this.maxLine[hi];
			this.maxRapid[i] = this.maxRapid[hi];
		}
		this.used = BUCKETS / 2;
		this.perBucket *= 2;
	}

	/** The points in line order (each bucket's low and high point, once when they coincide). */
	result(round: (v: number) => number): ProgramProfile {
		const points: ProfilePoint[] = [];
		for (let k = 0; k < this.used; k++) {
			const lo: ProfilePoint = [this.minLine[k], round(this.minTip[k]), this.minRapid[k] as 0 | 1];
			const hi: ProfilePoint = [this.maxLine[k], round(this.maxTip[k]), this.maxRapid[k] as 0 | 1];
			if (lo[0] === hi[0] && lo[1] === hi[1]) points.push(lo);
			else if (lo[0] <= hi[0]) points.push(lo, hi);
			else points.push(hi, lo);
		}
		return {
			points,
			toolChanges: this.changes.slice(),
			toolChangeCount: this.changeCount,
			toolChangesPerMark: this.changeStride,
			movesPerPoint: this.perBucket
		};
	}
}
