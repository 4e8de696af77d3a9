/**
 * Keeps findings for a program without letting a huge or broken file grow memory: at most
 * `maxPerKind` findings per kind are kept, every one is counted, and one line gets at most one
 * finding of a kind (so keys stay unique).
 */
import {
	findingKey,
	makeFinding,
	type Finding,
	type FindingSubject,
	type FindingKind,
	type Severity
} from '../findings';

/** Findings kept so far and the count of every kind found. */
export class FindingCollector {
	readonly findings: Finding[] = [];
	readonly counts = new Map<FindingKind, number>();
	private readonly kept = new Map<FindingKind, number>();
	private readonly keys = new Set<string>();

	constructor(
		private readonly maxPerKind: number,
		private readonly programId: string | undefined
	) {}

	/** False once a kind is full: callers skip building the message. Counts the finding. */
	wants(kind: FindingKind): boolean {
		this.counts.set(kind, (this.counts.get(kind) ?? 0) + 1);
		return (this.kept.get(kind) ?? 0) < this.maxPerKind;
	}

	/** Adds a finding (call `wants` first). A second finding of a kind on one line is dropped. */
	add(
		kind: FindingKind,
		severity: Severity,
		line: number,
		message: string,
		data?: Finding['data']
	): void {
		const subject: FindingSubject = this.programId
			? { type: 'program-line', line, programId: this.programId }
			: { type: 'program-line', line };
		const key = findingKey(kind, subject);
		if (this.keys.has(key)) {
			const other = this.findings.find((f) => f.key === key);
			// Keep the stronger of two on one line: a stop must never hide behind a caution.
			if (other && other.severity === 'caution' && severity === 'stop') {
				other.severity = 'stop';
				other.message = message;
				if (data) other.data = data;
			}
			return;
		}
		this.keys.add(key);
		this.kept.set(kind, (this.kept.get(kind) ?? 0) + 1);
		this.findings.push(makeFinding(kind, severity, subject, message, data));
	}

	/** Total found per kind (kept or not), as a plain object for stats. */
	countsObject(): Partial<Record<FindingKind, number>> {
		return Object.fromEntries(this.counts) as Partial<Record<FindingKind, number>>;
	}

	/** How many were found but not kept. */
	suppressed(): number {
		let total = 0;
		for (const n of this.counts.values()) total += n;
		return total - this.findings.length;
	}
}
