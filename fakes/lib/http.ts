/**
 * Small node:http helpers shared by the fake servers. No framework on purpose: the fakes must
 * start in a blink inside `npm test` and have nothing to configure.
 */
import type { IncomingMessage, Server, ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
// The app's own helper (no imports of its own, so plain tsx runs it here too).
export { escapeHtml } from '../../src/lib/html';

/** Largest request body a fake accepts; far above anything the SDKs send, low enough to stop a runaway client. */
const MAX_BODY_BYTES = 5 * 1024 * 1024;

/** Thrown when a fake cannot listen on its port, with a one-line cause that index.ts prints as is. */
export class ListenError extends Error {
	constructor(
		message: string,
		readonly code: string | undefined
	) {
		super(message);
		this.name = 'ListenError';
	}
}

/** Reads the whole request body as UTF-8 text (or rejects past {@link MAX_BODY_BYTES}). */
export function readBody(req: IncomingMessage): Promise<string> {
	return new Promise((resolve, reject) => {
		const chunks: Buffer[] = [];
		let size = 0;
		req.on('data', (chunk: Buffer) => {
			size += chunk.length;
			if (size > MAX_BODY_BYTES) {
				reject(new Error(`request body larger than ${MAX_BODY_BYTES} bytes`));
				req.destroy();
				return;
			}
			chunks.push(chunk);
		});
		req.on('end', () => resolve(Buffer.concat(chunks).toString('utf8')));
		req.on('error', reject);
	});
}

/** Sends a JSON body with the given status. */
export function sendJson(res: ServerResponse, status: number, body: unknown): void {
	const text = JSON.stringify(body, null, 2);
	res.writeHead(status, {
		'content-type': 'application/json; charset=utf-8',
		'content-length': Buffer.byteLength(text)
	});
	res.end(text);
}

/** Sends a complete HTML page with the given status. */
export function sendHtml(res: ServerResponse, status: number, html: string): void {
	res.writeHead(status, {
		'content-type': 'text/html; charset=utf-8',
		'content-length': Buffer.byteLength(html),
		// The stand-in pages are only ever shown on loopback; never let a browser cache a stale state.
		'cache-control': 'no-store'
	});
	res.end(html);
}

/** Redirects a browser after a form post (303, so the next request is a GET). */
export function redirect(res: ServerResponse, location: string): void {
	res.writeHead(303, { location, 'content-length': 0 });
	res.end();
}

/**
 * Starts listening and resolves with the base URL. A busy or forbidden port becomes a
 * {@link ListenError} whose message says what to do, because a stack trace helps nobody there.
 */
export function listen(
	server: Server,
	port: number,
	host: string,
	label: string,
	portEnv: string
): Promise<string> {
	return new Promise((resolve, reject) => {
		const onError = (err: NodeJS.ErrnoException) => {
			server.off('listening', onListening);
			if (err.code === 'EADDRINUSE') {
				reject(
					new ListenError(
						`${label}: port ${port} on ${host} is already in use (is another copy of the fakes running?). Stop that process or set ${portEnv} to a free port.`,
						err.code
					)
				);
			} else if (err.code === 'EACCES') {
				reject(
					new ListenError(
						`${label}: not allowed to listen on port ${port} on ${host}. Set ${portEnv} to a port above 1023.`,
						err.code
					)
				);
			} else {
				reject(
					new ListenError(`${label}: cannot listen on ${host}:${port}: ${err.message}`, err.code)
				);
			}
		};
		const onListening = () => {
			server.off('error', onError);
			const address = server.address() as AddressInfo;
			resolve(`http://${urlHost(host)}:${address.port}`);
		};
		server.once('error', onError);
		server.once('listening', onListening);
		server.listen(port, host);
	});
}

/** A wildcard bind address is not something a browser or client can dial; use loopback in URLs. */
function urlHost(host: string): string {
	if (host === '0.0.0.0' || host === '::' || host === '') return '127.0.0.1';
	return host.includes(':') ? `[${host}]` : host;
}

/**
 * Closes the server and drops idle keep-alive sockets: the SDKs keep connections open, and
 * without this `close()` would wait for their idle timeout.
 */
export function closeServer(server: Server): Promise<void> {
	return new Promise((resolve, reject) => {
		if (!server.listening) {
			resolve();
			return;
		}
		server.close((err) => (err ? reject(err) : resolve()));
		server.closeAllConnections();
	});
}
