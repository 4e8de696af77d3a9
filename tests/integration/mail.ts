import { config } from '$lib/server/config';

export interface CaughtMail {
	id: string;
	to: string[];
	subject: string;
	text: string | null;
	html: string | null;
}

/** Messages the fake SES caught for one address, newest first (read over HTTP, as a user's inbox would be). */
export async function mailsTo(address: string): Promise<CaughtMail[]> {
	const res = await fetch(`${config.sesEndpoint}/_fake/messages?to=${encodeURIComponent(address)}`);
	if (!res.ok) throw new Error(`fake SES answered ${res.status}`);
	return res.json();
}

/** The first link into the app found in a message's text part. */
export function linkIn(mail: CaughtMail, path: RegExp): string {
	const link = (mail.text ?? '')
		.match(/https?:\/\/\S+/g)
		?.find((l) => path.test(new URL(l).pathname));
	if (!link) throw new Error(`no ${path} link in "${mail.subject}"`);
	return link;
}
