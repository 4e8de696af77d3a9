/**
 * Keeps findings for a program without letting a huge or broken file grow memory. Caps are per
 * kind and severity: at most `maxPerKind` cautions of a kind are kept, stops are kept up to
 * STOP_CAP of a kind (a stop must never hide behind cautions), and every finding is counted
 * exactly. One line gets at most one finding of a kind (so keys stay unique); a second one on
 * the same line is merged into the first, the stronger severity winning, and is not counted.
 */
import {
	findingKey,
	makeFinding,
	type Finding,
	type FindingSubject,
	type FindingKind,
	type Severity
} from '../findings';

/** Stops kept per kind: far above any real program, only a guard against a hostile file. */
export const STOP_CAP = 10_000;

/** Message and data of a finding, built only when it is kept. */
export type Build = () => { message: string; data?: Finding['data'] };

/** Findings kept so far and the exact count of every kind and severity found. */
export class FindingCollector {
	readonly findings: Finding[] = [];
	/** Found per kind (kept or not). */
	readonly counts = new Map<FindingKind, number>();
	/** Found per severity (kept or not). */
	stops = 0;
	cautions = 0;
	/** Stops left out past STOP_CAP (never in a real program). */
	stopsCapped = false;
	/** While set (a refused line's words applied quietly), nothing is reported. */
	muted = false;
	private readonly keptCautions = new Map<FindingKind, number>();
	private readonly keptStops = new Map<FindingKind, number>();
	/** Kept findings by key, to merge a second one on the same line. */
	private readonly byKey = new Map<string, Finding>();
	/** Last line reported per kind, to merge same-line findings that were not kept. */
	private readonly lastLine = new Map<FindingKind, number>();
	private readonly lastSeverity = new Map<FindingKind, Severity>();

	constructor(
		private readonly maxPerKind: number,
		private readonly programId: string | undefined
	) {}

	private subject(line: number): FindingSubject {
		return this.programId
			? { type: 'program-line', line, programId: this.programId }
			: { type: 'program-line', line };
	}

	/**
	 * Reports a finding; returns it when kept (callers may update its message later), else null.
	 * `build` runs only when the finding is kept.
	 */
	report(kind: FindingKind, severity: Severity, line: number, build: Build): Finding | null {
		if (this.muted) return null;
		const subject = this.subject(line);
		const key = findingKey(kind, subject);
		const kept = this.byKey.get(key);
		if (kept) {
			if (kept.severity === 'caution' && severity === 'stop') this.promote(kept, build);
			return kept;
		}
		if (this.lastLine.get(kind) === line) {
			// Same line, not kept: merge (a stop replacing a caution is kept below).
			if (!(this.lastSeverity.get(kind) === 'caution' && severity === 'stop')) return null;
			this.cautions--;
			this.counts.set(kind, (this.counts.get(kind) ?? 1) - 1);
		}
		this.lastLine.set(kind, line);
		this.lastSeverity.set(kind, severity);
		this.counts.set(kind, (this.counts.get(kind) ?? 0) + 1);
		const caps = severity === 'stop' ? this.keptStops : this.keptCautions;
		const max = severity === 'stop' ? STOP_CAP : this.maxPerKind;
		if (severity === 'stop') this.stops++;
		else this.cautions++;
		const n = caps.get(kind) ?? 0;
		if (n >= max) {
			if (severity === 'stop') this.stopsCapped = true;
			return null;
		}
		caps.set(kind, n + 1);
		const { message, data } = build();
		const f = makeFinding(kind, severity, subject, message, data);
		this.byKey.set(key, f);
		this.findings.push(f);
		return f;
	}

	/**
	 * Makes an earlier caution on `line` a stop (e.g. another tool's H once the tip goes low).
	 * Works whether or not the caution was kept.
	 */
	upgrade(kind: FindingKind, line: number, build: Build): void {
		if (this.muted) return;
		const kept = this.byKey.get(findingKey(kind, this.subject(line)));
		if (kept) {
			if (kept.severity === 'caution') this.promote(kept, build);
			return;
		}
		this.cautions--;
		this.counts.set(kind, (this.counts.get(kind) ?? 1) - 1);
		this.lastLine.delete(kind);
		this.report(kind, 'stop', line, build);
	}

	private promote(f: Finding, build: Build): void {
		const { message, data } = build();
		f.severity = 'stop';
		f.message = message;
		if (data) f.data = data;
		this.cautions--;
		this.stops++;
		this.keptCautions.set(f.kind, (this.keptCautions.get(f.kind) ?? 1) - 1);
		this.keptStops.set(f.kind, (this.keptStops.get(f.kind) ?? 0) + 1);
	}

	/** Total found per kind (kept or not), as a plain object for stats. */
	countsObject(): Partial<Record<FindingKind, number>> {
		return Object.fromEntries(this.counts) as Partial<Record<FindingKind, number>>;
	}

	/** How many were found but not kept. */
	suppressed(): number {
		return this.stops + this.cautions - this.findings.length;
	}
}
