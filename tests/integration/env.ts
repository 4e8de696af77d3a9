import { reloadConfig } from '$lib/server/config';

/**
 * Changes one environment variable for the rest of a test file (undefined unsets it) and has the
 * server's config read the environment again: config.ts parses process.env once and keeps it.
 */
export function setEnv(name: string, value: string | undefined): void {
	if (value === undefined) delete process.env[name];
	else process.env[name] = value;
	reloadConfig();
}
