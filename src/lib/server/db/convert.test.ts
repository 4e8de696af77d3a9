import { describe, expect, it } from 'vitest';
import { iso, isoOrNull } from './convert';

describe('iso', () => {
	it('writes a Date, a timestamp string and epoch milliseconds as the same UTC ISO string', () => {
		const want = '2026-12-03T14:05:00.000Z';
		expect(iso(new Date(want))).toBe(want);
		expect(iso('2026-12-03 15:05:00+01')).toBe(want);
		expect(iso(Date.parse(want))).toBe(want);
	});

	it('refuses what is not a time rather than writing a wrong one', () => {
		expect(() => iso('not a time')).toThrow(RangeError);
	});
});

describe('isoOrNull', () => {
	it('keeps a missing timestamp missing and converts a present one', () => {
		expect(isoOrNull(null)).toBeNull();
		expect(isoOrNull(undefined)).toBeNull();
		expect(isoOrNull(new Date('2026-12-03T14:05:00Z'))).toBe('2026-12-03T14:05:00.000Z');
	});
});
