/**
 * Which tool changes the picture of the tip's heights can mark. A posted program may change
 * tools thousands of times: drawn one line each they merge into a grey band that reads as
 * "heights unknown" shading, and their labels into a black bar. A mark is drawn only where it
 * stands clear of the last one (it then stands for the changes it hides), and labelled only
 * where its label has room.
 */
export interface ToolChangeMark {
	/** The first change the mark stands for. */
	line: number;
	tool: string;
	/** Position along the picture (its own units). */
	px: number;
	/** Changes this mark stands for (1 = only its own). */
	stands: number;
	/** The last line among them. */
	lastLine: number;
	label: boolean;
}

/** Closest two marks may be, and two labels ("T12" at 11 px type needs about 24). */
export const MARK_GAP = 6;
export const LABEL_GAP = 28;

export function toolChangeMarks(
	changes: readonly [line: number, tool: string][],
	xOf: (line: number) => number
): ToolChangeMark[] {
	const marks: ToolChangeMark[] = [];
	let lastLabel = -Infinity;
	for (const [line, tool] of changes) {
		const px = xOf(line);
		const last = marks[marks.length - 1];
		if (last && px - last.px < MARK_GAP) {
			last.stands++;
			last.lastLine = line;
			continue;
		}
		const label = px - lastLabel >= LABEL_GAP;
		if (label) lastLabel = px;
		marks.push({ line, tool, px, stands: 1, lastLine: line, label });
	}
	return marks;
}
