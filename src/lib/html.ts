/**
 * Escapes text for HTML (and XML) element content and quoted attributes. The one escaping helper
 * for HTML written by hand — e-mails, the digest, the fakes' pages and XML answers; Svelte
 * components escape by themselves. No imports, so the fakes (plain Node through tsx) can use it.
 */
export function escapeHtml(text: string): string {
	return text
		.replace(/&/g, '&amp;')
		.replace(/</g, '&lt;')
		.replace(/>/g, '&gt;')
		.replace(/"/g, '&quot;')
		.replace(/'/g, '&#39;');
}
