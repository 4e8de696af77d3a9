/**
 * A timestamp column as the ISO 8601 string pages and JSON carry. node-postgres hands timestamps
 * over as `Date`; raw queries and aggregates may give a string, so any of them is taken.
 */
export function iso(v: unknown): string {
	return new Date(v as Date | string | number).toISOString();
}

/** The same for a column that may be null (not yet acknowledged, never measured…). */
export function isoOrNull(v: unknown): string | null {
	return v === null || v === undefined ? null : iso(v);
}
