import type { Handle } from '@sveltejs/kit';

/**
 * Input the app can never use, refused with 400 and a sentence before any route sees it
 * (issue 13: these gave bare 500s from PostgreSQL or from SvelteKit's form parser):
 * - a NUL character (U+0000) anywhere in the address, the query or a submitted form field —
 *   PostgreSQL text cannot hold it;
 * - a form action posted as anything but a form (text/plain, JSON…).
 * JSON API routes (/api/…) and Auth.js (/auth/…) read their own bodies and are left alone.
 */
const FORM_TYPES = ['application/x-www-form-urlencoded', 'multipart/form-data'];
/** Form bodies above this are file uploads; their text fields are checked where they are read. */
const CHECK_LIMIT = 16 * 1024 * 1024;

function refuse(message: string, accept: string | null): Response {
	if (accept?.includes('application/json'))
		return new Response(JSON.stringify({ type: 'error', error: { message }, status: 400 }), {
			status: 400,
			headers: { 'content-type': 'application/json' }
		});
	return new Response(message, {
		status: 400,
		headers: { 'content-type': 'text/plain; charset=utf-8' }
	});
}

function hasNul(text: string): boolean {
	return text.includes('\u0000');
}

function decoded(text: string): string {
	try {
		return decodeURIComponent(text.replace(/\+/g, ' '));
	} catch {
		return text;
	}
}

export const requestGuard: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	const accept = request.headers.get('accept');
	if (hasNul(decoded(url.pathname)) || hasNul(decoded(url.search)))
		return refuse('The address contains a NUL character (%00), which is never valid here.', accept);
	const isWrite = !['GET', 'HEAD', 'OPTIONS'].includes(request.method);
	const appRoute = !url.pathname.startsWith('/api/') && !url.pathname.startsWith('/auth/');
	if (isWrite && appRoute) {
		const type = (request.headers.get('content-type') ?? '').split(';')[0].trim().toLowerCase();
		if (!FORM_TYPES.includes(type))
			return refuse(
				`Forms must be sent as ${FORM_TYPES.join(' or ')}; this request was sent as "${type || 'nothing'}".`,
				accept
			);
		const length = Number(request.headers.get('content-length') ?? 0);
		if (length <= CHECK_LIMIT) {
			let form: FormData | undefined;
			try {
				form = await request.clone().formData();
			} catch {
				return refuse('The form could not be read: its body does not match its type.', accept);
			}
			for (const [name, value] of form.entries()) {
				if (typeof value === 'string' && hasNul(value))
					return refuse(
						`The field "${name}" contains a NUL character (U+0000), which is never valid text.`,
						accept
					);
			}
		}
	}
	return resolve(event);
};
