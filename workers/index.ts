/**
 * The background worker process (`npm run worker`; `npm start` runs it beside the app).
 * Each queue lives in its own folder under workers/ with its queue, processor and job-data
 * type, and exports `start(): Promise<Closable>`. Add a queue by adding its folder and one line
 * to QUEUES below. BullMQ guidance followed: retries with backoff, finished jobs removed,
 * processors idempotent, graceful close on SIGTERM/SIGINT.
 */
process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= 'true';

export interface Closable {
	name: string;
	close(): Promise<void>;
}

type Starter = () => Promise<Closable | Closable[]>;

const QUEUES: Record<string, () => Promise<{ start: Starter }>> = {
	'shop-checks': () => import('./shop-checks/index'),
	'program-check': () => import('./program-check/index'),
	'shop-lifecycle': () => import('./shop-lifecycle/index')
};

async function main() {
	const running: Closable[] = [];
	for (const [name, load] of Object.entries(QUEUES)) {
		const started = await (await load()).start();
		running.push(...(Array.isArray(started) ? started : [started]));
		console.log(`datumkeep worker: ${name} ready`);
	}
	if (running.length === 0) console.log('datumkeep worker: no queues configured');
	let closing = false;
	const shutdown = async (signal: string) => {
		if (closing) process.exit(1);
		closing = true;
		console.log(`datumkeep worker: ${signal}, finishing current jobs…`);
		await Promise.allSettled(running.map((r) => r.close()));
		const { closeDb } = await import('$lib/server/db');
		const { closeServers } = await import('$lib/server/db/servers');
		await closeServers().catch(() => {});
		await closeDb();
		process.exit(0);
	};
	process.on('SIGTERM', () => void shutdown('SIGTERM'));
	process.on('SIGINT', () => void shutdown('SIGINT'));
}

main().catch((e) => {
	console.error(`datumkeep worker: failed to start: ${(e as Error).message}`);
	process.exit(1);
});
