import { render } from 'svelte/server';
import LoadProgramRefused from '$lib/components/setups/LoadProgramRefused.svelte';
import type { LoadProgramResult } from './load-program';

/** The download: plain text with content-disposition: attachment. */
export function programResponse(result: Extract<LoadProgramResult, { ok: true }>): Response {
	return new Response(result.text, {
		headers: {
			'content-type': 'text/plain; charset=utf-8',
			'content-disposition': `attachment; filename="${result.filename}"`,
			'cache-control': 'private, no-store'
		}
	});
}

/**
 * A refusal: 422 with the engine's reasons — a small page of its own for a browser that followed
 * the download link (endpoints do not get the app's error page), JSON for anything else.
 */
export function refusalResponse(
	request: Request,
	what: string,
	reasons: string[],
	backHref: string
): Response {
	const accept = request.headers.get('accept') ?? '';
	if (!accept.includes('text/html')) {
		return new Response(JSON.stringify({ message: `No load program for ${what}.`, reasons }), {
			status: 422,
			headers: { 'content-type': 'application/json' }
		});
	}
	const page = render(LoadProgramRefused, { props: { what, reasons, backHref } });
	const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
${page.head}</head>
<body>${page.body}</body></html>`;
	return new Response(html, {
		status: 422,
		headers: { 'content-type': 'text/html; charset=utf-8' }
	});
}
