import { createHash, randomBytes } from 'node:crypto';

/**
 * Single-use tokens for e-mailed links (invitations, password resets). The link carries the
 * token; the database keeps only its SHA-256, so a leaked table cannot be replayed.
 */
export function newToken(): { token: string; hash: string } {
	const token = randomBytes(32).toString('base64url');
	return { token, hash: hashToken(token) };
}

export function hashToken(token: string): string {
	return createHash('sha256').update(token).digest('hex');
}
