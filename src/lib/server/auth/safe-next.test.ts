import { describe, expect, it } from 'vitest';
import { safeNext } from './sign-in';

// The usual open-redirect bypasses (tab, newline, backslash, protocol-relative, encoded forms):
// each must fall back to /shops, never leave the site.
describe('safeNext: only same-origin paths after sign-in', () => {
	it.each([
		'/%09/evil.example',
		'/\t/evil.example',
		'/\n/evil.example',
		'//evil.example',
		'///evil.example',
		'/\\evil.example',
		'\\\\evil.example',
		'/%5Cevil.example',
		'/%5cevil.example',
		'/%2F%2Fevil.example',
		'/%2f/evil.example',
		'https://evil.example/shops',
		'javascript:alert(1)',
		'evil.example',
		' /shops',
		'/%E0%A4%A', // broken percent-encoding
		'/\u2215\u2215evil.example' // division slashes
	])('refuses %j', (next) => {
		expect(safeNext(next)).toBe('/shops');
	});

	it.each([
		['/shops/fernhill-precision', '/shops/fernhill-precision'],
		[
			'/shops/fernhill-precision/machines/1?tab=tools#t2',
			'/shops/fernhill-precision/machines/1?tab=tools#t2'
		],
		['/shops/a%20b', '/shops/a%20b']
	])('keeps %j', (next, expected) => {
		expect(safeNext(next)).toBe(expected);
	});

	it('falls back when there is nothing', () => {
		expect(safeNext('')).toBe('/shops');
		expect(safeNext(null)).toBe('/shops');
	});
});
