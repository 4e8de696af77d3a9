import { describe, expect, test } from 'vitest';
import { LABEL_GAP, MARK_GAP, toolChangeMarks } from './tool-change-marks';

describe('tool change marks on the picture of heights', () => {
	test('a few changes far apart are each marked and labelled', () => {
		const marks = toolChangeMarks(
			[
				[4, '1'],
				[40, '2'],
				[90, '']
			],
			(line) => line * 5
		);
		expect(marks.map((m) => [m.line, m.tool, m.stands, m.label])).toEqual([
			[4, '1', 1, true],
			[40, '2', 1, true],
			[90, '', 1, true]
		]);
	});

	test('28 568 changes over 120 000 lines on a 852-unit-wide picture stay far fewer, one per gap at least', () => {
		// The bench's posted-style program changes tool every ~4 lines of its main program.
		const changes: [number, string][] = [];
		for (let line = 10; line < 70_000; line += 7) changes.push([line, String((line % 4) + 1)]);
		const xOf = (line: number) => 84 + (line / 120_000) * 852;
		const marks = toolChangeMarks(changes, xOf);
		expect(marks.length).toBeLessThanOrEqual(Math.ceil(xOf(70_000) - xOf(10)) / MARK_GAP + 1);
		expect(marks.reduce((n, m) => n + m.stands, 0)).toBe(changes.length);
		for (let i = 1; i < marks.length; i++) {
			expect(marks[i].px - marks[i - 1].px).toBeGreaterThanOrEqual(MARK_GAP);
			expect(marks[i].line).toBeGreaterThan(marks[i - 1].lastLine);
		}
		const labelled = marks.filter((m) => m.label);
		for (let i = 1; i < labelled.length; i++)
			expect(labelled[i].px - labelled[i - 1].px).toBeGreaterThanOrEqual(LABEL_GAP);
	});

	test('two changes on nearly the same spot make one mark standing for both', () => {
		const marks = toolChangeMarks(
			[
				[100, '3'],
				[101, '4']
			],
			(line) => line
		);
		expect(marks).toEqual([
			{ line: 100, tool: '3', px: 100, stands: 2, lastLine: 101, label: true }
		]);
	});
});
