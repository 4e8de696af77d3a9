import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import net from 'node:net';

/**
 * For tests/e2e/cluster.spec.ts: `npm run cluster` (scripts/cluster.sh) started in the
 * background with its own ports, database and Redis database, and a TCP proxy that makes one
 * node's change feed slow.
 */
export interface RunningCluster {
	url: string;
	dir: string;
	pids: Record<string, number>;
	stop(): Promise<void>;
}

export async function startCluster(env: Record<string, string>, timeoutMs = 150_000) {
	const child: ChildProcess = spawn('bash', ['scripts/cluster.sh'], {
		env: { ...(process.env as Record<string, string>), ...env },
		stdio: ['ignore', 'pipe', 'pipe'],
		detached: true
	});
	let out = '';
	const ready = await new Promise<{ url: string; dir: string }>((resolve, reject) => {
		const timer = setTimeout(
			() => reject(new Error(`the cluster did not start in time:\n${out}`)),
			timeoutMs
		);
		const onData = (b: Buffer) => {
			out += b.toString();
			const url = /cluster ready at (\S+)/.exec(out)?.[1];
			const dir = /logs and configs in (\S+);/.exec(out)?.[1];
			if (url && dir) {
				clearTimeout(timer);
				resolve({ url, dir });
			}
		};
		child.stdout!.on('data', onData);
		child.stderr!.on('data', onData);
		child.once('exit', (code) => {
			clearTimeout(timer);
			reject(new Error(`the cluster stopped (exit ${code}):\n${out}`));
		});
	});
	const pids = Object.fromEntries(
		readFileSync(`${ready.dir}/pids`, 'utf8')
			.trim()
			.split('\n')
			.map((l) => l.split('='))
			.map(([k, v]) => [k, Number(v)])
	);
	return {
		...ready,
		pids,
		async stop() {
			if (child.exitCode !== null) return;
			const exited = new Promise((r) => child.once('exit', r));
			child.kill('SIGTERM'); // the script's trap stops every process it started
			await Promise.race([exited, new Promise((r) => setTimeout(r, 15_000))]);
		}
	} satisfies RunningCluster;
}

/**
 * A TCP proxy to `target` that passes what the client sends at once and what the server sends
 * `delayMs` later (in order): a change feed behind it hears notifications late.
 */
export async function slowProxy(
	port: number,
	target: { host: string; port: number },
	delayMs: number
) {
	const sockets = new Set<net.Socket>();
	const server = net.createServer((client) => {
		const upstream = net.connect(target.port, target.host);
		sockets.add(client).add(upstream);
		client.on('data', (b) => upstream.write(b));
		upstream.on('data', (b) => {
			setTimeout(() => client.destroyed || client.write(b), delayMs);
		});
		const close = () => {
			client.destroy();
			upstream.destroy();
		};
		client.on('close', close).on('error', close);
		upstream.on('close', () => setTimeout(close, delayMs)).on('error', close);
	});
	await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
	return {
		async close() {
			for (const s of sockets) s.destroy();
			await new Promise((r) => server.close(r));
		}
	};
}
