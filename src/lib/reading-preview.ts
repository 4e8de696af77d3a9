import type { Finding } from '$lib/offsets';

/**
 * What a touch-off shows before it is saved: built on the server
 * (src/lib/server/readings/preview.ts), shown by the reading pages and their components
 * (ReadingPreviewCard, SaveReading), and gated again by the server when it is saved.
 */

/** A finding as the preview carries it. */
export type BriefFinding = Pick<Finding, 'kind' | 'severity' | 'message'>;

export interface ReadingPreview {
	registerKind: 'tool' | 'work';
	register: string;
	/** "H2" or "G54". */
	label: string;
	value: number;
	previous: number | null;
	previousAt: string | null;
	/** value − previous, exact to the micro-unit (the engine's offsetDelta). */
	delta: number | null;
	findings: BriefFinding[];
	/** The lengths that went into the sum, for the "how it was worked out" line. */
	working: string;
	/** Findings on the tool used for a part-top touch (its own offset feeds this one). */
	toolFindings: BriefFinding[];
	referenceVersion: number;
}

/** The Stop findings a save would go over (the register's own and the touching tool's). */
export function stopsOf(
	preview: Pick<ReadingPreview, 'findings' | 'toolFindings'>
): BriefFinding[] {
	return [...preview.findings, ...preview.toolFindings].filter((f) => f.severity === 'stop');
}
