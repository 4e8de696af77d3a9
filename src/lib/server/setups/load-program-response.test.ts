import { describe, expect, it } from 'vitest';
import { refusalResponse } from './load-program-response';

const reasons = [
	'Work offset G54 (Z <none>) is not a number',
	'Tool length H4 ("12 & 3") is too long'
];
const ask = (accept: string) =>
	refusalResponse(
		new Request('http://127.0.0.1/x', { headers: { accept } }),
		'Haas <VF-2>',
		reasons,
		'/shops/fernhill/machines/1'
	);

describe('refusalResponse', () => {
	it('gives a browser a 422 page of its own, with every reason escaped', async () => {
		const res = ask('text/html,application/xhtml+xml');
		expect(res.status).toBe(422);
		expect(res.headers.get('content-type')).toBe('text/html; charset=utf-8');
		const html = await res.text();
		expect(html.startsWith('<!doctype html>')).toBe(true);
		expect(html).toContain('<title>No load program — Datumkeep</title>');
		expect(html).toContain('Stop: no load program for Haas &lt;VF-2>');
		expect(html).toContain('Work offset G54 (Z &lt;none>) is not a number');
		expect(html).toContain('Tool length H4 ("12 &amp; 3") is too long');
		expect(html).toContain('href="/shops/fernhill/machines/1"');
		expect(html).not.toContain('<VF-2>');
		// Its styles travel with it (no app stylesheet on an endpoint's page).
		expect(html).toMatch(/<style[^>]*>[^<]*max-width:\s*40rem/);
	});

	it('gives anything else the reasons as JSON', async () => {
		const res = ask('application/json');
		expect(res.status).toBe(422);
		expect(await res.json()).toEqual({ message: 'No load program for Haas <VF-2>.', reasons });
	});
});
