/** Display helpers shared by pages (no server imports). */

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

export const UNIT_LABEL = { inch: 'in', mm: 'mm' } as const;

/** Fixed decimals for a machine's least increment: 0.0001 → 4, 0.001 → 3. */
export function decimalsFor(resolution: number): number {
	return Math.max(0, Math.min(6, Math.round(-Math.log10(resolution))));
}

export function fixed(value: number, resolution: number): string {
	return value.toFixed(decimalsFor(resolution));
}

export const CONVENTION_LABEL: Record<string, string> = {
	'reference-touch': 'Tip touched on the reference',
	'gauge-length': 'Tool length from the gauge line',
	'master-tool': 'Master tool (H = 0)'
};
