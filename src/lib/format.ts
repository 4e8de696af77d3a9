/** Display helpers shared by pages (no server imports). Offsets are formatted by the engine. */
import { CONVENTION_LABEL, formatLength, formatWithUnits, UNIT_LABEL } from '$lib/offsets';
import { formatWhen } from './time';

export { CONVENTION_LABEL, formatLength, formatWithUnits, UNIT_LABEL };

/** "3 days ago", "5 hours ago", "just now" — ages of readings and references. */
export function ageFrom(iso: string | null, now = Date.now()): string {
	if (!iso) return 'never';
	const ms = now - new Date(iso).getTime();
	const minutes = Math.round(ms / 60_000);
	if (minutes < 2) return 'just now';
	if (minutes < 120) return `${minutes} minutes ago`;
	const hours = Math.round(minutes / 60);
	if (hours < 48) return `${hours} hours ago`;
	return `${Math.round(hours / 24)} days ago`;
}

/**
 * Date and time as the shop floor reads it, e.g. "2 Dec 2026, 14:05", in the shop's time zone
 * (`data.shop.timeZone` on every shop page). The zone is required: see $lib/time.
 */
export function when(iso: string, timeZone: string): string {
	return formatWhen(iso, timeZone);
}
