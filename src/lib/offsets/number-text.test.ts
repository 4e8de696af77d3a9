import { describe, expect, it } from 'vitest';
import { numberTextMessage, readNumberText } from './number-text';

describe('readNumberText: the one strict reader for typed numbers', () => {
	it.each([
		['20.5', 20.5, 1],
		['  -400.75 ', -400.75, 2],
		['+3', 3, 0],
		['.5', 0.5, 1],
		['5.', 5, 0],
		['\u22120.0100', -0.01, 4], // typographic minus, trailing zeros kept in the count
		['-0', 0, 0],
		['25.4000', 25.4, 4]
	])('reads "%s" as exactly %d', (text, value, places) => {
		expect(readNumberText(text)).toEqual({ ok: true, value, places });
	});

	// Decimal comma: refused everywhere (docs/SECURITY.md, DEVELOPERS.md): "1,000" is one or
	// one thousand depending on who typed it.
	it.each([
		['20,5', 'use a point for decimals'],
		['-400,75', 'use a point for decimals'],
		['1,000', 'without thousands separators'],
		['12,345.5', 'without thousands separators'],
		['25abc', 'is not a number'],
		['25 mm', 'has a unit ("mm")'],
		['1.5in', 'has a unit ("in")'],
		['1.5"', 'has a unit'],
		['1 000', 'space inside'],
		['1e3', 'exponent'],
		['0x10', 'is not a number'],
		['1.2.3', 'is not a number'],
		['--1', 'is not a number'],
		['Infinity', 'is not a number'],
		['NaN', 'is not a number']
	])('refuses "%s" (%s)', (text, why) => {
		const r = readNumberText(text);
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.reason).toContain(why);
	});

	it('says blank is blank (the field decides whether that is allowed)', () => {
		for (const blank of ['', '   ', undefined, null])
			expect(readNumberText(blank)).toMatchObject({ ok: false, empty: true });
	});

	it('reads JSON numbers by the same rules', () => {
		expect(readNumberText(20.5)).toEqual({ ok: true, value: 20.5, places: 1 });
		expect(readNumberText(Number.NaN).ok).toBe(false);
		expect(readNumberText(Infinity).ok).toBe(false);
		expect(readNumberText(true).ok).toBe(false);
	});

	it('whole numbers refuse any decimals, even .0', () => {
		expect(readNumberText('12', { whole: true })).toMatchObject({ ok: true, value: 12 });
		expect(readNumberText('12.0', { whole: true }).ok).toBe(false);
		expect(readNumberText(12.5, { whole: true }).ok).toBe(false);
		expect(readNumberText('99999999999999999', { whole: true }).ok).toBe(false);
	});

	it('the message names the field, what was typed and why', () => {
		const r = readNumberText('20,5');
		expect(!r.ok && numberTextMessage('Z travel', '20,5', r.reason)).toMatch(
			/^Z travel must be a number; "20,5" has a comma: use a point for decimals/
		);
	});
});
