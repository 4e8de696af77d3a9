import { describe, expect, it } from 'vitest';
import { escapeHtml } from './html';

describe('escapeHtml', () => {
	it('escapes the five characters that can end text or an attribute', () => {
		expect(escapeHtml(`<a href="x" title='y'>Tom & Jerry</a>`)).toBe(
			'&lt;a href=&quot;x&quot; title=&#39;y&#39;&gt;Tom &amp; Jerry&lt;/a&gt;'
		);
	});

	it('escapes an ampersand once, so an entity in the text shows as typed', () => {
		expect(escapeHtml('&lt; G54')).toBe('&amp;lt; G54');
	});
});
