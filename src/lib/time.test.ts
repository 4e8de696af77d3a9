import { describe, expect, it } from 'vitest';
import { formatDay, formatTime, formatWhen, isTimeZone, timeZones } from './time';

describe('shop-zone time formatting', () => {
	const at = '2026-12-02T23:30:00Z';

	it('prints the same instant in the shop zone, not the process zone', () => {
		expect(formatWhen(at, 'UTC')).toBe('2 Dec 2026, 23:30');
		// Berlin is UTC+1 in December (CET): the date rolls over.
		expect(formatWhen(at, 'Europe/Berlin')).toBe('3 Dec 2026, 00:30');
		// Chicago is UTC−6 in December (CST).
		expect(formatWhen(at, 'America/Chicago')).toBe('2 Dec 2026, 17:30');
		expect(formatDay(at, 'Europe/Berlin')).toBe('3 Dec 2026');
		expect(formatTime(at, 'Asia/Kolkata')).toBe('05:00:00');
	});

	it('knows real zones and refuses made-up ones', () => {
		expect(isTimeZone('Europe/Berlin')).toBe(true);
		expect(isTimeZone('UTC')).toBe(true);
		expect(isTimeZone('Mars/Olympus')).toBe(false);
		expect(isTimeZone('')).toBe(false);
		expect(timeZones()).toContain('UTC');
		expect(timeZones()).toContain('America/Chicago');
		// Listed under today's name, not ICU's old one.
		expect(timeZones()).toContain('Asia/Kolkata');
		expect(timeZones()).not.toContain('Asia/Calcutta');
	});

	it('falls back to UTC for a stored zone the runtime does not know', () => {
		expect(formatWhen(at, 'Mars/Olympus')).toBe(formatWhen(at, 'UTC'));
	});
});
