/**
 * "2026-12-03 09:30" as the shop's wall clock → the instant. The presetter writes local time
 * without a zone; the shop's time zone (settings) says which instant it was.
 */
import { MEASURED_AT_PATTERN } from '$lib/schemas/tool-library';

/** Minutes the zone is ahead of UTC at `at`. */
function offsetMinutes(at: Date, timeZone: string): number {
	const parts = new Intl.DateTimeFormat('en-US', {
		timeZone,
		hourCycle: 'h23',
		year: 'numeric',
		month: '2-digit',
		day: '2-digit',
		hour: '2-digit',
		minute: '2-digit',
		second: '2-digit'
	}).formatToParts(at);
	const get = (t: string) => Number(parts.find((p) => p.type === t)?.value);
	const asUtc = Date.UTC(
		get('year'),
		get('month') - 1,
		get('day'),
		get('hour'),
		get('minute'),
		get('second')
	);
	return Math.round((asUtc - at.getTime()) / 60_000);
}

/** The instant, or null when the text is not a real date (e.g. 2026-02-30). A bare date is noon. */
export function wallTimeToDate(text: string, timeZone: string): Date | null {
	const t = text.trim();
	if (!MEASURED_AT_PATTERN.test(t)) return null;
	const [date, time = '12:00'] = t.split(/[T ]/);
	const [y, mo, d] = date.split('-').map(Number);
	const [h, mi, s = 0] = time.split(':').map(Number);
	if (mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 59) return null;
	const wall = Date.UTC(y, mo - 1, d, h, mi, s);
	const check = new Date(wall);
	if (check.getUTCMonth() !== mo - 1 || check.getUTCDate() !== d) return null;
	// Two passes settle a time next to a daylight-saving change.
	let at = wall - offsetMinutes(new Date(wall), timeZone) * 60_000;
	at = wall - offsetMinutes(new Date(at), timeZone) * 60_000;
	return new Date(at);
}
