/**
 * Refuses database URLs that point off this machine. Migrations and the demo seed rewrite data,
 * so running them against a shared or production server by accident must take an explicit flag.
 */
export function isLoopbackHost(host: string): boolean {
	const h = host.replace(/^\[|\]$/g, '').toLowerCase();
	return h === 'localhost' || h === '::1' || /^127(\.\d{1,3}){3}$/.test(h);
}

export class RemoteDatabaseRefused extends Error {}

export function assertLoopbackDatabase(url: string, allowRemote = false): void {
	let host: string;
	try {
		host = new URL(url).hostname;
	} catch {
		throw new RemoteDatabaseRefused(`DATABASE_URL "${redact(url)}" is not a valid URL.`);
	}
	if (!host) {
		throw new RemoteDatabaseRefused(`DATABASE_URL "${redact(url)}" names no host; use 127.0.0.1.`);
	}
	if (!allowRemote && !isLoopbackHost(host)) {
		throw new RemoteDatabaseRefused(
			`DATABASE_URL points at "${host}", which is not this machine. ` +
				'Refusing to migrate or seed it; set DATUMKEEP_ALLOW_REMOTE_DB=1 (or pass --allow-remote-db) if you mean it.'
		);
	}
}

/** Hides the password in a URL before it goes into a message. */
export function redact(url: string): string {
	return url.replace(/(\/\/[^:/@]+:)[^@]*@/, '$1***@');
}
