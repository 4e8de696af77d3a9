import { browser } from '$app/environment';

/**
 * Whether this device has a connection, as the browser reports it (`navigator.onLine` and its
 * events). A fetch that fails while this says online is treated as offline by the outbox too.
 */
export const connection = $state({ online: browser ? navigator.onLine : true });

if (browser) {
	addEventListener('online', () => (connection.online = true));
	addEventListener('offline', () => (connection.online = false));
}
