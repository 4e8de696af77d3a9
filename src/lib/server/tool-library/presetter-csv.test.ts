import { describe, expect, it } from 'vitest';
import { presetterMappingSchema } from '$lib/schemas/tool-library';
import { parsePresetterCsv, readCell } from './presetter-csv';
import { wallTimeToDate } from './wall-time';

const mapping = (over: Record<string, string> = {}) =>
	presetterMappingSchema.parse({
		name: 'ID',
		gaugeLength: 'Z',
		radius: 'R',
		units: 'mm',
		decimalSeparator: 'comma',
		delimiter: 'semicolon',
		...over
	});
const NOW = new Date('2026-12-03T12:00:00Z');

describe('readCell', () => {
	it('reads a decimal comma only when the mapping says so', () => {
		expect(readCell('25,4', 'L', 'comma')).toEqual({ ok: true, value: 25.4 });
		expect(readCell('25', 'L', 'comma')).toEqual({ ok: true, value: 25 });
		expect(readCell('', 'L', 'comma')).toEqual({ ok: true, value: undefined });
		const point = readCell('25.4', 'L', 'comma');
		expect(point.ok || point.message).toMatch(/has a point.*decimal comma/);
		const two = readCell('1,000,5', 'L', 'comma');
		expect(two.ok || two.message).toMatch(/more than one comma/);
		const comma = readCell('25,4', 'L', 'point');
		expect(comma.ok || comma.message).toMatch(/decimal separator to comma/);
		expect(readCell('25.4', 'L', 'point')).toEqual({ ok: true, value: 25.4 });
	});

	it('refuses units, text and more decimals than a length column keeps', () => {
		expect(readCell('25,4 mm', 'L', 'comma').ok).toBe(false);
		expect(readCell('abc', 'L', 'point').ok).toBe(false);
		const places = readCell('1.23456', 'L', 'point');
		expect(places.ok || places.message).toMatch(/5 decimals/);
	});
});

describe('parsePresetterCsv', () => {
	it('maps headers case-insensitively and marks known names as re-measures', () => {
		const r = parsePresetterCsv(
			'id;z;r\nA-1;104,775;6,35\nB-2;98;\n',
			mapping(),
			new Map([['a-1', 7]]),
			{ timeZone: 'UTC', now: NOW }
		);
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		expect(r.rows[0]).toMatchObject({
			row: 2,
			assemblyId: 7,
			errors: [],
			measurement: { name: 'A-1', gaugeLength: 104.775, radius: 6.35 }
		});
		expect(r.rows[1]).toMatchObject({ assemblyId: null, measurement: { radius: null } });
	});

	it('names a missing mapped column and lists the file’s columns', () => {
		const r = parsePresetterCsv('Tool;Length\nA;1\n', mapping(), new Map(), {
			timeZone: 'UTC',
			now: NOW
		});
		expect(r).toEqual({
			ok: false,
			message: expect.stringMatching(
				/no column "ID" \(Assembly name\).*Its columns are: Tool, Length/
			)
		});
	});

	it('checks every row: empty name, empty length, negative radius, future date', () => {
		const r = parsePresetterCsv(
			'ID;Z;R;When\n;10;1;\nB;;1;\nC;10;-1;\nD;10;1;2027-01-01\n',
			mapping({ measuredAt: 'When' }),
			new Map(),
			{ timeZone: 'UTC', now: NOW }
		);
		if (!r.ok) throw new Error(r.message);
		expect(r.rows.map((x) => x.errors.map((e) => e.column))).toEqual([
			['ID'],
			['Z'],
			['R'],
			['When']
		]);
		expect(r.rows[3].errors[0].message).toMatch(/in the future/);
	});
});

describe('wallTimeToDate', () => {
	it('reads the wall clock in the shop’s zone, across daylight saving', () => {
		// Chicago is UTC−6 in winter, UTC−5 in summer (IANA tz database).
		expect(wallTimeToDate('2026-12-01 07:30', 'America/Chicago')!.toISOString()).toBe(
			'2026-12-01T13:30:00.000Z'
		);
		expect(wallTimeToDate('2026-07-01T07:30', 'America/Chicago')!.toISOString()).toBe(
			'2026-07-01T12:30:00.000Z'
		);
		expect(wallTimeToDate('2026-12-01', 'UTC')!.toISOString()).toBe('2026-12-01T12:00:00.000Z');
	});

	it('refuses dates that do not exist', () => {
		expect(wallTimeToDate('2026-02-30', 'UTC')).toBeNull();
		expect(wallTimeToDate('2026-13-01', 'UTC')).toBeNull();
		expect(wallTimeToDate('01.12.2026', 'UTC')).toBeNull();
	});
});
