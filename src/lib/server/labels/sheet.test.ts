import { describe, expect, it } from 'vitest';
import { labelSizeOf, labelUrls } from './sheet';

describe('label sheet', () => {
	it('opens the touch-off page of each item on this server', () => {
		const u = labelUrls('https://shop.example', 'fernhill', 1);
		expect(u.machine).toBe('https://shop.example/shops/fernhill/machines/1/machine-mode');
		expect(u.fixture(2)).toBe('https://shop.example/shops/fernhill/machines/1/readings/part-top/2');
		expect(u.tool(3)).toBe('https://shop.example/shops/fernhill/machines/1/readings/tool/3');
	});
	it('falls back to A4 for an unknown size', () => {
		expect(labelSizeOf('letter')).toBe('letter');
		expect(labelSizeOf('label')).toBe('label');
		expect(labelSizeOf('poster')).toBe('a4');
		expect(labelSizeOf(null)).toBe('a4');
	});
});
