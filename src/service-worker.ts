/// <reference no-default-lib="true"/>
/// <reference lib="esnext" />
/// <reference lib="webworker" />
/// <reference types="@sveltejs/kit" />
/**
 * Keeps the pages an operator needs at the machine usable without a connection (DESIGN.md §7
 * "Machine mode"; issue 17). The app's own files are cached when the worker installs; shop pages
 * and the machine JSON the pages poll go to the network first and fall back to the copy kept
 * the last time they loaded. The machine pages ask for their touch-off pages to be kept ahead
 * ("warm" message). Nothing but GET is touched: readings saved offline wait in IndexedDB
 * ($lib/offline/outbox.ts), never here. Signing out deletes the kept pages (PAGES cache).
 */
import { build, files, version } from '$service-worker';

const sw = self as unknown as ServiceWorkerGlobalScope;
const ASSETS = `assets-${version}`;
/** Kept pages: one name for every version, so an update does not drop what is kept offline. */
const PAGES = 'pages-v1';
const APP_FILES = [...build, ...files];

sw.addEventListener('install', (event) => {
	event.waitUntil(
		(async () => {
			const cache = await caches.open(ASSETS);
			await cache.addAll(APP_FILES);
			await sw.skipWaiting();
		})()
	);
});

sw.addEventListener('activate', (event) => {
	event.waitUntil(
		(async () => {
			for (const key of await caches.keys())
				if (key.startsWith('assets-') && key !== ASSETS) await caches.delete(key);
			await sw.clients.claim();
		})()
	);
});

/** Shop pages and the machine JSON they poll: network first, the kept copy when offline. */
function isKeptPath(path: string): boolean {
	return (
		path.startsWith('/shops/') ||
		path === '/shops' ||
		/^\/api\/v1\/shops\/[^/]+\/machines\/\d+\/(readings|offsets)$/.test(path)
	);
}

const offlinePage = (url: URL) =>
	new Response(
		`<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>No connection — Datumkeep</title></head>` +
			`<body style="font-family:system-ui,sans-serif;margin:2rem;max-width:40rem;color:#16181d;background:#f6f6f4">` +
			`<h1>No connection</h1><p>This page (${url.pathname.replace(/[<>&"]/g, '')}) was not opened on this device before, so there is no copy of it here.</p>` +
			`<p>Readings saved on this device are kept and sent when the connection returns.</p>` +
			`<p><a href="/shops" style="display:inline-block;padding:0.75rem 1rem;background:#1f6f78;color:#fff;border-radius:0.375rem">Back to the shop</a></p></body></html>`,
		{ status: 503, headers: { 'content-type': 'text/html; charset=utf-8' } }
	);

async function networkFirst(request: Request): Promise<Response> {
	const cache = await caches.open(PAGES);
	try {
		const response = await fetch(request);
		const type = response.headers.get('content-type') ?? '';
		if (
			response.status === 200 &&
			response.type === 'basic' &&
			(type.includes('text/html') || type.includes('application/json'))
		) {
			await cache.put(request, response.clone());
		}
		return response;
	} catch (e) {
		const kept =
			(await cache.match(request, { ignoreVary: true })) ??
			(request.mode === 'navigate'
				? await cache.match(request, { ignoreSearch: true, ignoreVary: true })
				: undefined);
		if (kept) return kept;
		if (request.mode === 'navigate') return offlinePage(new URL(request.url));
		throw e;
	}
}

sw.addEventListener('fetch', (event) => {
	const request = event.request;
	if (request.method !== 'GET') return;
	const url = new URL(request.url);
	if (url.origin !== sw.location.origin) return;
	if (APP_FILES.includes(url.pathname)) {
		event.respondWith(
			(async () => (await caches.match(url.pathname, { cacheName: ASSETS })) ?? fetch(request))()
		);
		return;
	}
	// Client-side navigation data changes with what is invalidated: never answered from a copy
	// (offline, the app navigates with full page loads instead; see OfflineWatch.svelte).
	if (url.pathname.endsWith('/__data.json')) return;
	if (isKeptPath(url.pathname)) event.respondWith(networkFirst(request));
});

/** Pages kept ahead are fetched again at most this often (the pages poll for news anyway). */
const WARM_EVERY_MS = 10 * 60_000;
const warmedAt = new Map<string, number>();

sw.addEventListener('message', (event) => {
	const data = event.data as { type?: string; urls?: unknown } | null;
	if (data?.type === 'warm' && Array.isArray(data.urls)) {
		// Keep the machine's touch-off pages ahead of need: fetched while the connection is there.
		const now = Date.now();
		const urls = data.urls
			.filter((u): u is string => typeof u === 'string' && u.startsWith('/shops/'))
			.filter((u) => now - (warmedAt.get(u) ?? 0) > WARM_EVERY_MS)
			.slice(0, 100);
		for (const u of urls) warmedAt.set(u, now);
		event.waitUntil(
			(async () => {
				const cache = await caches.open(PAGES);
				for (const u of urls) {
					try {
						const res = await fetch(u, { credentials: 'same-origin' });
						if (res.status === 200 && res.type === 'basic') await cache.put(u, res);
					} catch {
						return; // offline again: keep what is there
					}
				}
			})()
		);
	}
	if (data?.type === 'forget') event.waitUntil(caches.delete(PAGES));
});
