/**
 * Every date and time a page shows goes through here, in the shop's own time zone (issue 18).
 * The zone is passed in, never taken from the process or the browser, so a server-rendered page
 * and the same page rendered again in the browser print the same text (no hydration drift).
 */

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatter(timeZone: string, kind: 'when' | 'day' | 'time' | 'short'): Intl.DateTimeFormat {
	const key = `${kind}|${timeZone}`;
	let f = formatters.get(key);
	if (!f) {
		const options: Intl.DateTimeFormatOptions =
			kind === 'when'
				? { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' }
				: kind === 'day'
					? { day: 'numeric', month: 'short', year: 'numeric' }
					: kind === 'time'
						? { hour: '2-digit', minute: '2-digit', second: '2-digit' }
						: { day: 'numeric', month: 'short' };
		f = new Intl.DateTimeFormat('en-GB', { ...options, timeZone: safeZone(timeZone) });
		formatters.set(key, f);
	}
	return f;
}

/** Whether `zone` is an IANA time zone name this runtime knows (e.g. "Europe/Berlin", "UTC"). */
export function isTimeZone(zone: unknown): zone is string {
	if (typeof zone !== 'string' || zone.length === 0 || zone.length > 64) return false;
	try {
		new Intl.DateTimeFormat('en-GB', { timeZone: zone });
		return true;
	} catch {
		return false;
	}
}

/** A stored zone that this runtime does not know falls back to UTC rather than failing a page. */
const safeZone = (zone: string) => (isTimeZone(zone) ? zone : 'UTC');

const toDate = (at: string | Date) => (at instanceof Date ? at : new Date(at));

/** Date and time as the shop floor reads it, e.g. "2 Dec 2026, 14:05", in the shop's zone. */
export function formatWhen(at: string | Date, timeZone: string): string {
	return formatter(timeZone, 'when').format(toDate(at));
}

/** Date only, e.g. "2 Dec 2026", in the shop's zone. */
export function formatDay(at: string | Date, timeZone: string): string {
	return formatter(timeZone, 'day').format(toDate(at));
}

/** Time of day with seconds, e.g. "14:05:09", in the shop's zone. */
export function formatTime(at: string | Date, timeZone: string): string {
	return formatter(timeZone, 'time').format(toDate(at));
}

/** Day and month, e.g. "2 Dec" (chart axes), in the shop's zone. */
export function formatShortDay(at: string | Date, timeZone: string): string {
	return formatter(timeZone, 'short').format(toDate(at));
}

/** The zone's short name at that moment, e.g. "CET", "GMT-5" — shown once per page, beside times. */
export function zoneLabel(timeZone: string, at: Date = new Date()): string {
	const part = new Intl.DateTimeFormat('en-GB', {
		timeZone: safeZone(timeZone),
		timeZoneName: 'short'
	})
		.formatToParts(at)
		.find((p) => p.type === 'timeZoneName');
	return part?.value ?? timeZone;
}

/**
 * Today's IANA names that ICU still lists under an old one (its list says Asia/Calcutta, not
 * Asia/Kolkata): shown under the current name, which Intl accepts just the same.
 */
const RENAMED: Record<string, string> = {
	'Asia/Calcutta': 'Asia/Kolkata',
	'Europe/Kiev': 'Europe/Kyiv',
	'Asia/Katmandu': 'Asia/Kathmandu',
	'Asia/Rangoon': 'Asia/Yangon',
	'America/Godthab': 'America/Nuuk',
	'Pacific/Enderbury': 'Pacific/Kanton',
	'Asia/Saigon': 'Asia/Ho_Chi_Minh',
	'Atlantic/Faeroe': 'Atlantic/Faroe'
};

/** Every IANA zone this runtime knows, for the settings page's list (current names). */
export function timeZones(): string[] {
	const zones = Intl.supportedValuesOf('timeZone').map((z) => RENAMED[z] ?? z);
	return [...new Set(['UTC', ...zones])].sort((a, b) =>
		a === 'UTC' ? -1 : b === 'UTC' ? 1 : a.localeCompare(b)
	);
}
