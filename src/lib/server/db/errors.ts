/** PostgreSQL error codes the app answers in words instead of a 500. */

/** unique_violation: another request wrote the same key first. */
export function isUniqueViolation(e: unknown, constraint?: string): boolean {
	const err = e as { code?: string; constraint?: string } | null;
	return err?.code === '23505' && (constraint === undefined || err.constraint === constraint);
}
