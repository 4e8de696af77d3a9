import type { RequestEvent } from '@sveltejs/kit';

/** The caller's network address for rate limiting (adapter-node honours ADDRESS_HEADER). */
export function clientAddress(event: RequestEvent): string {
	try {
		return event.getClientAddress();
	} catch {
		return 'unknown';
	}
}
