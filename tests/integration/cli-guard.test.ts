import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { describe, expect, it } from 'vitest';

const run = promisify(execFile);

async function script(name: string, env: Record<string, string>, args: string[] = []) {
	try {
		const r = await run('npx', ['tsx', `scripts/${name}.ts`, ...args], {
			env: { ...process.env, ...env },
			timeout: 30_000
		});
		return { code: 0, out: r.stdout + r.stderr };
	} catch (e) {
		const err = e as { code: number; stdout: string; stderr: string };
		return { code: err.code, out: err.stdout + err.stderr };
	}
}

describe('migrate and seed commands refuse a non-loopback DATABASE_URL', () => {
	for (const name of ['migrate', 'seed']) {
		it(`${name}: one line naming the host and the flag, exit 1, no stack trace`, async () => {
			const r = await script(name, {
				DATABASE_URL: 'postgres://postgres@db.example.com:5432/prod',
				DATUMKEEP_ALLOW_REMOTE_DB: '0'
			});
			expect(r.code).toBe(1);
			expect(r.out).toMatch(/not this machine/);
			expect(r.out).toMatch(/--allow-remote-db/);
			expect(r.out).not.toMatch(/\n\s+at /);
		});
	}

	it('migrate explains an unreachable loopback database in one line', async () => {
		const r = await script('migrate', { DATABASE_URL: 'postgres://postgres@127.0.0.1:1/nothing' });
		expect(r.code).toBe(1);
		expect(r.out).toMatch(/cannot reach PostgreSQL/);
		expect(r.out).not.toMatch(/\n\s+at /);
	});

	it('migrate on the test database succeeds and reports the shop schemas', async () => {
		const r = await script('migrate', {});
		expect(r.code).toBe(0);
		expect(r.out).toMatch(/migrated public \(0 new\) and \d+ shop schema/);
	});
});
