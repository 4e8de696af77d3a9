/**
 * The program check's entry points: a streaming checker fed chunks of text (memory stays flat
 * however long the program is) and `checkProgram` for a whole text at once. Lines are counted
 * as the file shows them (LF, CRLF or CR), from 1. Nothing in the program text can make these
 * throw: a line that cannot be read becomes a `parse-error` finding.
 */
import { sortFindings, type Finding, type FindingKind } from '../findings';
import { registerOrder, sortH } from '../registers';
import { roundToResolution, type Units } from '../units';
import { Block } from './block';
import { FindingCollector } from './collector';
import { resolveContext, type CheckContext } from './context';
import { Interpreter } from './interpreter';
import { say } from './messages';
import { scanLine } from './scanner';
import type { ProgramSetup } from './schema';

/** Longest line read as one; the rest of a longer line is skipped (and reported). */
export const MAX_LINE_CHARS = 64 * 1024;

/** What a program uses and where the tip goes. Lengths in the machine's units. */
export interface ProgramStats {
	/** Physical lines read. */
	lines: number;
	/** Lines with at least one word. */
	blocks: number;
	/** Motion blocks (G0–G3, drilling cycles, G28, G53 moves). */
	moves: number;
	/** Tools loaded by T…M6 (or taken from G43 H when no M6 came first), in number order. */
	tools: string[];
	/** H numbers applied with G43. */
	lengthOffsets: string[];
	/** Work offsets selected (G54 when none was, at the first move). */
	workOffsets: string[];
	/** Machine units and the units the program states: one, both ('mixed') or none (null). */
	units: { machine: Units; program: Units | 'mixed' | null };
	/** Lowest and highest tip height above the reference per tool, over moves in work coordinates. */
	tipZRange: Record<string, { min: number; max: number }>;
	/** Clearance plane per fixture (its own coordinates) and the same as a height above the reference. */
	clearancePlanes: Record<string, number>;
	clearanceHeight: number;
	/** Every finding found per kind; only `maxFindingsPerKind` of each are in `findings`. */
	findingCounts: Partial<Record<FindingKind, number>>;
	/** Findings found but not kept. */
	suppressed: number;
	/** A list above reached its cap (10 000 entries) and stopped growing. */
	listsCapped: boolean;
}

/** Result of a program check. */
export interface ProgramCheckResult {
	/** Stop findings first, then in line order. */
	findings: Finding[];
	stats: ProgramStats;
}

/** A checker fed a program in pieces. */
export interface ProgramChecker {
	/** Feeds the next piece of text; lines may be split anywhere between pieces. */
	push(chunk: string): void;
	/** Reads the last line and returns the result (the same one if called again). */
	end(): ProgramCheckResult;
	/** Lines read so far (for progress). */
	readonly lines: number;
}

class StreamChecker implements ProgramChecker {
	private readonly block = new Block();
	private readonly out: FindingCollector;
	private readonly run: Interpreter;
	private carry = '';
	private skipping = false;
	private pendingCR = false;
	private started = false;
	private result: ProgramCheckResult | null = null;

	constructor(private readonly ctx: CheckContext) {
		this.out = new FindingCollector(ctx.maxPerKind, ctx.programId);
		this.run = new Interpreter(ctx, this.out);
	}

	get lines(): number {
		return this.run.tally.lines;
	}

	push(chunk: string): void {
		if (this.result !== null) return;
		if (typeof chunk !== 'string') {
			this.notText();
			return;
		}
		let i = 0;
		const n = chunk.length;
		if (!this.started && n > 0) {
			this.started = true;
			if (chunk.charCodeAt(0) === 0xfeff) i = 1; // byte-order mark
		}
		if (this.pendingCR && i < n) {
			if (chunk.charCodeAt(i) === 10) i++;
			this.pendingCR = false;
		}
		let start = i;
		if (this.carry !== '' || this.skipping) {
			// Finish the line begun in an earlier piece.
			while (i < n) {
				const c = chunk.charCodeAt(i);
				if (c === 10 || c === 13) break;
				i++;
			}
			if (i === n) {
				this.extendCarry(chunk, start, n);
				return;
			}
			this.extendCarry(chunk, start, i);
			this.endCarry();
			i = this.afterBreak(chunk, i);
			start = i;
		}
		if (chunk.indexOf('\r', i) < 0) {
			// LF only (the usual case): the engine's native search beats a loop per character.
			let nl = chunk.indexOf('\n', i);
			while (nl >= 0) {
				this.line(chunk, start, nl);
				start = nl + 1;
				nl = chunk.indexOf('\n', start);
			}
		} else {
			while (i < n) {
				const c = chunk.charCodeAt(i);
				if (c !== 10 && c !== 13) {
					i++;
					continue;
				}
				this.line(chunk, start, i);
				i = this.afterBreak(chunk, i);
				start = i;
			}
		}
		if (start < n) this.extendCarry(chunk, start, n);
	}

	end(): ProgramCheckResult {
		if (this.result !== null) return this.result;
		if (this.carry !== '' || this.skipping) this.endCarry();
		this.result = this.build();
		return this.result;
	}

	/** Index after the break at `i` (CRLF counts once, also across pieces). */
	private afterBreak(chunk: string, i: number): number {
		if (chunk.charCodeAt(i) === 13) {
			if (i + 1 < chunk.length) return chunk.charCodeAt(i + 1) === 10 ? i + 2 : i + 1;
			this.pendingCR = true;
		}
		return i + 1;
	}

	private extendCarry(chunk: string, from: number, to: number): void {
		if (this.skipping || from === to) return;
		if (this.carry.length + (to - from) > MAX_LINE_CHARS) {
			// A line this long is not a program block; read what fits and skip the rest.
			this.carry += chunk.slice(from, from + (MAX_LINE_CHARS - this.carry.length));
			this.skipping = true;
			return;
		}
		this.carry += chunk.slice(from, to);
	}

	private endCarry(): void {
		const text = this.carry;
		const long = this.skipping;
		this.carry = '';
		this.skipping = false;
		this.line(text, 0, text.length, long);
	}

	private line(text: string, start: number, end: number, long = false): void {
		const lineNo = ++this.run.tally.lines;
		if (end - start > MAX_LINE_CHARS) {
			end = start + MAX_LINE_CHARS;
			long = true;
		}
		try {
			if (long) {
				// Not a program block: say so and do not guess what the cut-off words meant.
				this.run.tally.blocks++;
				if (this.out.wants('parse-error'))
					this.out.add('parse-error', 'stop', lineNo, say.longLine(MAX_LINE_CHARS));
				return;
			}
			scanLine(text, start, end, this.block);
			this.run.exec(this.block, lineNo);
		} catch (e) {
			if (this.out.wants('parse-error'))
				this.out.add(
					'parse-error',
					'caution',
					lineNo,
					say.internal(e instanceof Error ? e.message : 'unexpected')
				);
		}
	}

	private notText(): void {
		if (this.out.wants('parse-error'))
			this.out.add('parse-error', 'stop', Math.max(1, this.run.tally.lines), say.notText());
	}

	private build(): ProgramCheckResult {
		const t = this.run.tally;
		const res = this.ctx.resolution;
		const tipZRange: ProgramStats['tipZRange'] = {};
		for (const tool of sortH(t.tips.keys())) {
			const r = t.tips.get(tool)!;
			tipZRange[tool] = { min: round(r.min, res), max: round(r.max, res) };
		}
		const program =
			t.unitsSeen.size === 0 ? null : t.unitsSeen.size > 1 ? 'mixed' : [...t.unitsSeen][0];
		return {
			findings: sortFindings(this.out.findings),
			stats: {
				lines: t.lines,
				blocks: t.blocks,
				moves: t.moves,
				tools: sortH(t.tools),
				lengthOffsets: sortH(t.hs),
				workOffsets: [...t.registers].sort((a, b) => registerOrder(a) - registerOrder(b)),
				units: { machine: this.ctx.units, program },
				tipZRange,
				clearancePlanes: { ...this.ctx.planes },
				clearanceHeight: round(this.ctx.safeHeight, res),
				findingCounts: this.out.countsObject(),
				suppressed: this.out.suppressed(),
				listsCapped: t.capped
			}
		};
	}
}

function round(v: number, resolution: number): number {
	return Number.isFinite(v) && Math.abs(v) < 1e9 ? roundToResolution(v, resolution) : v;
}

/**
 * A checker to feed a program piece by piece (e.g. from a file stream); memory stays flat.
 * @throws OffsetInputError when the setup cannot be used (never for the program text)
 * @example
 * const checker = createProgramChecker(setup);
 * for await (const chunk of stream) checker.push(chunk);
 * const { findings, stats } = checker.end();
 */
export function createProgramChecker(setup: ProgramSetup): ProgramChecker {
	return new StreamChecker(resolveContext(setup));
}

/**
 * Checks a whole program against a setup (DESIGN.md §4): low rapids between fixtures, missing
 * length offsets, units, unknown or stale offsets, overtravel and unreadable lines.
 * @throws OffsetInputError when the setup cannot be used (never for the program text)
 */
export function checkProgram(text: string, setup: ProgramSetup): ProgramCheckResult {
	const checker = createProgramChecker(setup);
	checker.push(typeof text === 'string' ? text : (text as unknown as string));
	return checker.end();
}
