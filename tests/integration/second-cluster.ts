import { execFile } from 'node:child_process';
import { chownSync, mkdtempSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';

const run = promisify(execFile);

/** The newest Debian PostgreSQL binaries, as scripts/services.sh picks them. */
const BIN = '/usr/lib/postgresql/15/bin';

/** A free loopback port (asked of the kernel, then let go). */
export async function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = createServer();
		s.once('error', reject);
		s.listen(0, '127.0.0.1', () => {
			const { port } = s.address() as { port: number };
			s.close(() => resolve(port));
		});
	});
}

export interface SecondCluster {
	/** The superuser URL of `database` on this cluster. */
	url: (database: string) => string;
	port: number;
	stop: () => Promise<void>;
}

/**
 * A second, throw-away PostgreSQL cluster on loopback for the shop-move test: initdb into a
 * temporary folder as the `postgres` user (when run as root, as scripts/services.sh does), on a
 * port of its own, without fsync (its data is thrown away). `stop()` stops it and removes the
 * folder.
 */
export async function startSecondCluster(): Promise<SecondCluster> {
	const root = process.getuid?.() === 0;
	const asPg = (cmd: string, args: string[]) =>
		root ? run('runuser', ['-u', 'postgres', '--', cmd, ...args]) : run(cmd, args);
	const dir = mkdtempSync(join(tmpdir(), 'datumkeep-second-pg-'));
	if (root) {
		const { stdout } = await run('id', ['-u', 'postgres']);
		const { stdout: gid } = await run('id', ['-g', 'postgres']);
		chownSync(dir, Number(stdout.trim()), Number(gid.trim()));
	}
	const data = join(dir, 'pg');
	const port = await freePort();
	await asPg(`${BIN}/initdb`, [
		'-D',
		data,
		'-U',
		'postgres',
		'--auth=trust',
		'-E',
		'UTF8',
		'--locale=C.UTF-8',
		'--no-sync'
	]);
	await asPg(`${BIN}/pg_ctl`, [
		'-D',
		data,
		'-l',
		join(dir, 'server.log'),
		'-w',
		'-t',
		'30',
		'-o',
		`-c listen_addresses=127.0.0.1 -p ${port} -k ${dir} -c fsync=off -c synchronous_commit=off -c full_page_writes=off`,
		'start'
	]);
	return {
		port,
		url: (database) => `postgres://postgres@127.0.0.1:${port}/${database}`,
		stop: async () => {
			await asPg(`${BIN}/pg_ctl`, ['-D', data, '-m', 'immediate', '-w', 'stop']).catch(() => {});
			rmSync(dir, { recursive: true, force: true });
		}
	};
}
