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
import type { Dialect, DialectFrom } from './dialect';
import { Interpreter } from './interpreter';
import { findBreak, LineSplitter, MAX_LINE_CHARS, programBytes } from './lines';
import { say, why } from './messages';
import { Profile, type ProgramProfile } from './profile';
import { scanLine } from './scanner';
import type { ProgramSetup } from './schema';
import {
	OKind,
	readOLine,
	SubprogramRecorder,
	type Subprogram,
	type SubprogramLibrary
} from './structure';

export { MAX_LINE_CHARS };

/** Deepest subprogram nesting followed (a guard, above the 4 levels ISO-style controls allow [memory]). */
export const MAX_CALL_DEPTH = 8;
/** Most subprogram lines run through calls in one check (a guard for repeats and loops). */
export const MAX_CALLED_LINES = 5_000_000;

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
	/** Every finding found per severity (kept or not): stops are always kept. */
	severityCounts: { stop: number; caution: number };
	/** The dialect the program was checked in and where that choice came from. */
	dialect: Dialect;
	dialectFrom: DialectFrom;
	/** Subprograms in the file, and how many calls were followed into them. */
	subprograms: string[];
	callsFollowed: number;
	/** Lines whose heights were not known (inside "heights unknown" spans). */
	unknownSpans: [from: number, until: number | null][];
}

/** Result of a program check. */
export interface ProgramCheckResult {
	/** Stop findings first, then in line order. */
	findings: Finding[];
	stats: ProgramStats;
	/** The tip's height along the program, downsampled (when `profile: true` in the setup). */
	profile?: ProgramProfile;
}

/** A checker fed a program in pieces. */
export interface ProgramChecker {
	/**
	 * Feeds the next piece: bytes as stored (UTF-8 or ASCII) or text; lines may be split
	 * anywhere between pieces (a UTF-8 character too).
	 */
	push(chunk: string | Uint8Array): void;
	/** Reads the last line and returns the result (the same one if called again). */
	end(): ProgramCheckResult;
	/** Lines read so far (for progress). */
	readonly lines: number;
	/**
	 * After `end()`: the file's subprograms when a call came before its body (ISO-style bodies
	 * after M30), else null. Check again with them (`createProgramChecker(setup, library)`) to
	 * follow those calls too; `checkProgram` and `checkProgramStream` do so themselves.
	 */
	laterSubprograms(): SubprogramLibrary | null;
}

class StreamChecker implements ProgramChecker {
	private readonly block = new Block();
	private readonly out: FindingCollector;
	private readonly run: Interpreter;
	private readonly split: LineSplitter;
	private readonly structure: SubprogramRecorder;
	private readonly library: SubprogramLibrary;
	private readonly stack: string[] = [];
	private readonly profile: Profile | null;
	private calledLines = 0;
	/** Calls made before their body was read (followed only on a second pass). */
	private readonly missed = new Set<string>();
	private callsFollowed = 0;
	private result: ProgramCheckResult | null = null;

	/** First of two passes, after a call to a body not yet read: only bodies are collected. */
	private collecting = false;

	/** The line `lineEnd` scanned into `block` (its bytes and start), until `block1` uses it. */
	private scannedText: Uint8Array | null = null;
	private scannedStart = -1;

	/**
	 * `firstPass`: this pass will be followed by a second when a call comes before its body, so
	 * from that call on it only collects bodies (the second pass checks everything).
	 */
	constructor(
		private readonly ctx: CheckContext,
		library?: SubprogramLibrary,
		private readonly firstPass = false
	) {
		this.out = new FindingCollector(ctx.maxPerKind, ctx.programId);
		this.run = new Interpreter(ctx, this.out);
		this.profile = ctx.profile ? new Profile() : null;
		this.run.profile = this.profile;
		this.split = new LineSplitter(this);
		// With a library from a first pass, bodies are only told apart here, not kept again.
		this.structure = new SubprogramRecorder(library === undefined, false);
		this.library = library ?? this.structure.library;
	}

	get lines(): number {
		return this.run.tally.lines;
	}

	push(chunk: string | Uint8Array): void {
		if (this.result !== null) return;
		if (typeof chunk !== 'string' && !(chunk instanceof Uint8Array)) {
			this.notText();
			return;
		}
		this.split.push(programBytes(chunk));
	}

	end(): ProgramCheckResult {
		if (this.result !== null) return this.result;
		this.split.end();
		const open = this.structure.unclosed();
		if (open) {
			const iso = this.ctx.dialect === 'iso';
			this.out.report('parse-error', 'caution', open.line, () => ({
				message: say.unclosed(open.name, iso)
			}));
		}
		this.run.finish();
		this.result = this.build();
		return this.result;
	}

	/**
	 * Where the line at `start` ends (called by the splitter before `line`). A line that will
	 * be run is scanned here on the way, so its bytes are read once.
	 */
	lineEnd(text: Uint8Array, start: number, limit: number): number {
		if (this.collecting || this.run.ended || this.structure.defining) {
			this.scannedText = null;
			return findBreak(text, start, limit);
		}
		this.scannedText = text;
		this.scannedStart = start;
		return scanLine(text, start, limit, this.block);
	}

	/** One physical line (called by the splitter). */
	line(text: Uint8Array, start: number, end: number, long: boolean): void {
		const lineNo = ++this.run.tally.lines;
		if (this.collecting) {
			this.structure.line(text, start, end, lineNo);
			return;
		}
		try {
			if (long) {
				// Not a program block: say so and do not guess what the cut-off words meant.
				this.run.tally.blocks++;
				this.out.report('parse-error', 'stop', lineNo, () => ({
					message: say.longLine(MAX_LINE_CHARS)
				}));
				return;
			}
			// A subprogram's definition is not run where it is written (only when called).
			if (this.structure.line(text, start, end, lineNo)) return;
			if (this.run.ended) return;
			this.block1(text, start, end, lineNo);
		} catch (e) {
			this.out.report('parse-error', 'caution', lineNo, () => ({
				message: say.internal(e instanceof Error ? e.message : 'unexpected')
			}));
		}
	}

	/** Runs one line of the main program or of a called body. */
	private block1(text: Uint8Array, start: number, end: number, lineNo: number): void {
		const scanned = text === this.scannedText && start === this.scannedStart;
		this.scannedText = null;
		const c = text[start];
		const ol =
			c === 79 || c === 111 || c === 32 || c === 9 || c === 58 ? readOLine(text, start, end) : null;
		if (ol !== null && ol.kind !== OKind.Number) {
			this.run.tally.blocks++;
			if (ol.kind === OKind.Call) this.follow(ol.name, 1, lineNo, `o${ol.name}`);
			else if (ol.kind === OKind.Return) this.run.returned = true;
			else if (ol.kind === OKind.Flow || ol.kind === OKind.Other)
				this.run.loseHeights(lineNo, why.flow);
			return;
		}
		if (!scanned) scanLine(text, start, end, this.block);
		this.run.exec(this.block, lineNo);
		if (this.run.ended && this.run.depth === 0) this.structure.endMain();
		const call = this.run.call;
		if (call !== null) {
			this.run.call = null;
			this.follow(call.name, call.repeats, call.line, `O${call.name}`);
		}
	}

	/** Follows a call into a subprogram of this file (depth limit, loop guard, line budget). */
	private follow(name: string, repeats: number, line: number, shown: string): void {
		let sub: Subprogram | undefined = this.library.get(name);
		let reps = repeats;
		if (sub === undefined && /^\d{5,8}$/.test(name)) {
			// "M98 P30100": the first digits repeat, the last four name the program [memory].
			const n = Number(name);
			const inner = this.library.get(String(n % 10000));
			if (inner) {
				sub = inner;
				reps = Math.trunc(n / 10000);
			}
		}
		if (sub === undefined) {
			if (this.missed.size < 1000) this.missed.add(name);
			if (this.firstPass) {
				// The second pass will know every body: only collect them from here on.
				this.collecting = true;
				this.structure.findMainEnd();
			}
			return this.run.loseHeights(line, why.external(shown));
		}
		if (this.stack.includes(name) || this.stack.length >= MAX_CALL_DEPTH)
			return this.run.loseHeights(line, why.recursion(shown));
		this.callsFollowed++;
		this.stack.push(name);
		const depth = this.run.depth;
		this.run.depth = this.stack.length;
		try {
			for (let r = 0; r < reps; r++) {
				for (let i = 0; i < sub.lines.length; i++) {
					if (++this.calledLines > MAX_CALLED_LINES) return this.run.loseHeights(line, why.budget);
					const text = sub.lines[i];
					this.block1(text, 0, text.length, sub.first + i);
					if (this.run.returned) break;
				}
				this.run.returned = false;
			}
		} finally {
			this.stack.pop();
			this.run.depth = depth;
			this.run.returned = false;
		}
	}

	/** A first pass cut short: the second pass must run. */
	get needsSecondPass(): boolean {
		return this.collecting;
	}

	laterSubprograms(): SubprogramLibrary | null {
		if (this.result === null) return null;
		if (this.collecting) return this.library;
		for (const name of this.missed) {
			if (this.library.has(name)) return this.library;
			if (/^\d{5,8}$/.test(name) && this.library.has(String(Number(name) % 10000)))
				return this.library;
		}
		return null;
	}

	private notText(): void {
		this.out.report('parse-error', 'stop', Math.max(1, this.run.tally.lines), () => ({
			message: say.notText()
		}));
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
		const findings = sortFindings(this.out.findings);
		const spans: [number, number | null][] = [];
		for (const f of findings)
			if (f.kind === 'heights-unknown' && f.data)
				spans.push([Number(f.data.from), f.data.until === 'end' ? null : Number(f.data.until)]);
		spans.sort((a, b) => a[0] - b[0]);
		const result: ProgramCheckResult = {
			findings,
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
				listsCapped: t.capped || this.out.stopsCapped,
				severityCounts: { stop: this.out.stops, caution: this.out.cautions },
				dialect: this.ctx.dialect,
				dialectFrom: this.ctx.dialectFrom,
				subprograms: [...this.library.keys()].slice(0, 1000),
				callsFollowed: this.callsFollowed,
				unknownSpans: spans
			}
		};
		if (this.profile) {
			// The picture's heights repeat (the same planes, again and again): each distinct
			// height is rounded once (exact decimal rounding is slow next to a map look-up).
			const rounded = new Map<number, number>();
			result.profile = this.profile.result((v) => {
				let r = rounded.get(v);
				if (r === undefined) {
					r = round(v, res);
					rounded.set(v, r);
				}
				return r;
			});
		}
		return result;
	}
}

function round(v: number, resolution: number): number {
	return Number.isFinite(v) && Math.abs(v) < 1e9 ? roundToResolution(v, resolution) : v;
}

/**
 * A checker to feed a program piece by piece (e.g. from a file stream); memory stays flat.
 * Subprograms are followed when called: pass the library from a first pass over the file
 * (`createSubprogramCollector`) so calls to bodies written after them (ISO-style, after M30)
 * are followed too; without it only bodies already read are.
 * @throws OffsetInputError when the setup cannot be used (never for the program text)
 * @example
 * const checker = createProgramChecker(setup);
 * for await (const chunk of stream) checker.push(chunk);
 * const { findings, stats } = checker.end();
 */
export function createProgramChecker(
	setup: ProgramSetup,
	subprograms?: SubprogramLibrary
): ProgramChecker {
	return new StreamChecker(resolveContext(setup), subprograms);
}

/**
 * Checks a whole program against a setup (DESIGN.md §4): low rapids between fixtures, missing
 * length offsets, units, unknown or stale offsets, overtravel and unreadable lines.
 * @throws OffsetInputError when the setup cannot be used (never for the program text)
 */
export function checkProgram(text: string, setup: ProgramSetup): ProgramCheckResult {
	const ctx = resolveContext(setup);
	// Encoded once (not per pass): the checker reads bytes.
	const bytes = typeof text === 'string' ? programBytes(text) : (text as unknown as Uint8Array);
	const first = new StreamChecker(ctx, undefined, true);
	first.push(bytes);
	const result = first.end();
	// A call came before its body (ISO-style subprograms after M30): once more, knowing them.
	const library = first.laterSubprograms();
	if (library === null) return result;
	const second = new StreamChecker(ctx, library);
	second.push(bytes);
	return second.end();
}

/**
 * Checks a program read piece by piece from a source that can be read again (a stored file):
 * one pass, and a second only when a subprogram is called before its body is written.
 * @throws OffsetInputError when the setup cannot be used (never for the program text)
 */
export async function checkProgramStream(
	read: () => AsyncIterable<string | Uint8Array>,
	setup: ProgramSetup,
	onProgress?: (lines: number, pass: 1 | 2) => Promise<void> | void
): Promise<ProgramCheckResult> {
	const ctx = resolveContext(setup);
	const run = async (library: SubprogramLibrary | undefined, pass: 1 | 2, firstPass = false) => {
		const checker = new StreamChecker(ctx, library, firstPass);
		for await (const chunk of read()) {
			checker.push(chunk);
			if (onProgress) await onProgress(checker.lines, pass);
		}
		return checker;
	};
	const first = await run(undefined, 1, true);
	const result = first.end();
	const library = first.laterSubprograms();
	if (library === null) return result;
	return (await run(library, 2)).end();
}
