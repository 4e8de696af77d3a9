import { describe, expect, it } from 'vitest';
import { formatBytes } from './format';

describe('formatBytes', () => {
	it('rounds up to whole KB below 1 MB, so a small file never reads as 0 KB', () => {
		expect(formatBytes(1)).toBe('1 KB');
		expect(formatBytes(1024)).toBe('1 KB');
		expect(formatBytes(1025)).toBe('2 KB');
		expect(formatBytes(1024 * 1024 - 1)).toBe('1024 KB');
	});

	it('gives MB to one decimal from 1 MB up', () => {
		expect(formatBytes(1024 * 1024)).toBe('1.0 MB');
		expect(formatBytes(9 * 1024 * 1024)).toBe('9.0 MB');
		expect(formatBytes(20 * 1024 * 1024 + 1)).toBe('20.0 MB');
	});
});
