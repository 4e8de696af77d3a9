import { error } from '@sveltejs/kit';
import { dev } from '$app/environment';
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

/** Development-only: what the app sent through the fake SES. Off in production builds unless DATUMKEEP_DEV_MAILBOX=1. */
export const load: PageServerLoad = async ({ fetch, url }) => {
	if (!dev && process.env.DATUMKEEP_DEV_MAILBOX !== '1') error(404, 'Not found');
	const endpoint = config.sesEndpoint;
	if (!endpoint) error(404, 'Not found');
	const to = url.searchParams.get('to') ?? '';
	try {
		const res = await fetch(
			`${endpoint}/_fake/messages${to ? `?to=${encodeURIComponent(to)}` : ''}`
		);
		const body = await res.json();
		const messages: FakeMessage[] = Array.isArray(body) ? body : (body.messages ?? []);
		return { messages, to, problem: null };
	} catch {
		return {
			messages: [] as FakeMessage[],
			to,
			problem: `The fake SES at ${endpoint} is not answering. Is npm start running?`
		};
	}
};
