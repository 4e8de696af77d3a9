import { error, redirect } from '@sveltejs/kit';
import { config } from '$lib/server/config';
import type { PageServerLoad } from './$types';

interface FakeMessage {
	id: string;
	to: string[];
	from: string;
	subject: string;
	text: string;
	html: string;
	receivedAt: string;
}

/** The local fake SES, and only it: a loopback endpoint (never real SES, never elsewhere). */
function fakeSesEndpoint(): string | undefined {
	const { endpoint, local } = config.ses;
	return local ? endpoint : undefined;
}

/**
 * The local demo's mailbox: what the app sent through the local fake SES (npm start, npm run
 * dev, tests). It exists only while the app sends through the fake, needs sign-in, and shows
 * the signed-in person only the mail addressed to them — invitation and reset links are keys.
 */
export const load: PageServerLoad = async ({ fetch, locals, url }) => {
	const endpoint = fakeSesEndpoint();
	if (!endpoint) error(404, 'Not found');
	if (!locals.user) redirect(303, `/signin?next=${encodeURIComponent(url.pathname)}`);
	const me = locals.user.email.toLowerCase();
	try {
		const res = await fetch(`${endpoint}/_fake/messages?to=${encodeURIComponent(me)}`);
		const body = await res.json();
		const all: FakeMessage[] = Array.isArray(body) ? body : (body.messages ?? []);
		// The fake's filter is a convenience; the decision is made here.
		const bare = (a: string) => (/<([^>]+)>/.exec(a)?.[1] ?? a).trim().toLowerCase();
		const messages = all.filter((m) => m.to.some((a) => bare(a) === me));
		return { messages, to: me, problem: null };
	} catch {
		return {
			messages: [] as FakeMessage[],
			to: me,
			problem: `The fake SES at ${endpoint} is not answering. Is npm start running?`
		};
	}
};
