/**
 * Parsing for the SES query protocol (`Destination.ToAddresses.member.1=…`) and for the small
 * subset of MIME that SendRawEmail needs in a fake.
 */

/** Collects `prefix.member.1`, `prefix.member.2`, … in numeric order (the SDK numbers from 1). */
export function memberList(params: URLSearchParams, prefix: string): string[] {
	const found: Array<[number, string]> = [];
	const head = `${prefix}.member.`;
	for (const [key, value] of params) {
		if (!key.startsWith(head)) continue;
		const index = Number(key.slice(head.length));
		if (Number.isInteger(index) && index > 0) found.push([index, value]);
	}
	return found.sort((a, b) => a[0] - b[0]).map(([, value]) => value);
}

/** The bare address of `"Name" <a@b.c>` or `a@b.c`, lower-cased for comparisons. */
export function bareAddress(address: string): string {
	const angle = /<([^>]*)>\s*$/.exec(address);
	return (angle ? angle[1] : address).trim().toLowerCase();
}

/** Deliberately loose: one `@`, something on each side, a dot in the domain, no spaces. */
export function isValidAddress(address: string): boolean {
	return /^[^\s@<>]+@[^\s@<>]+\.[^\s@<>]+$/.test(bareAddress(address));
}

/** Splits a header value such as `a@b.c, "Doe, J" <j@d.e>` into addresses, respecting quotes. */
export function splitAddressList(value: string): string[] {
	const out: string[] = [];
	let current = '';
	let quoted = false;
	let angle = false;
	for (const ch of value) {
		if (ch === '"') quoted = !quoted;
		else if (ch === '<' && !quoted) angle = true;
		else if (ch === '>' && !quoted) angle = false;
		if (ch === ',' && !quoted && !angle) {
			if (current.trim()) out.push(current.trim());
			current = '';
		} else {
			current += ch;
		}
	}
	if (current.trim()) out.push(current.trim());
	return out;
}

/** What the fake keeps of a raw MIME message. */
export interface ParsedRaw {
	headers: Map<string, string>;
	text: string | null;
	html: string | null;
}

/**
 * Minimal MIME reader: headers, then either a single text/plain or text/html body, or one
 * multipart level (or nested multipart/alternative) from which the text and HTML parts are
 * taken. Attachments are ignored; that is enough to look at e-mails in a dev mailbox.
 */
export function parseRawMessage(raw: string): ParsedRaw {
	const { headers, body } = splitHeaders(raw);
	const result: ParsedRaw = { headers, text: null, html: null };
	collectParts(headers, body, result, 0);
	return result;
}

function splitHeaders(raw: string): { headers: Map<string, string>; body: string } {
	const normalised = raw.replace(/\r\n/g, '\n');
	const end = normalised.indexOf('\n\n');
	const head = end === -1 ? normalised : normalised.slice(0, end);
	const body = end === -1 ? '' : normalised.slice(end + 2);
	const headers = new Map<string, string>();
	// Folded header lines continue with whitespace; join them before splitting name and value.
	for (const line of head.replace(/\n[ \t]+/g, ' ').split('\n')) {
		const colon = line.indexOf(':');
		if (colon <= 0) continue;
		headers.set(line.slice(0, colon).trim().toLowerCase(), line.slice(colon + 1).trim());
	}
	return { headers, body };
}

function collectParts(
	headers: Map<string, string>,
	body: string,
	result: ParsedRaw,
	depth: number
): void {
	const type = (headers.get('content-type') ?? 'text/plain').toLowerCase();
	if (type.startsWith('multipart/') && depth < 3) {
		const boundary = /boundary="?([^";]+)"?/i.exec(headers.get('content-type') ?? '')?.[1];
		if (!boundary) return;
		for (const chunk of body.split(`--${boundary}`).slice(1)) {
			if (chunk.startsWith('--')) break;
			const part = splitHeaders(chunk.replace(/^\n/, ''));
			collectParts(part.headers, part.body.replace(/\n$/, ''), result, depth + 1);
		}
		return;
	}
	const decoded = decodeTransfer(body, headers.get('content-transfer-encoding') ?? '');
	if (type.startsWith('text/html') && result.html === null) result.html = decoded;
	else if (type.startsWith('text/plain') && result.text === null) result.text = decoded;
}

function decodeTransfer(body: string, encoding: string): string {
	switch (encoding.toLowerCase()) {
		case 'base64':
			return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8');
		case 'quoted-printable':
			return Buffer.from(
				body
					.replace(/=\n/g, '')
					.replace(/=([0-9A-Fa-f]{2})/g, (_, hex: string) =>
						String.fromCharCode(parseInt(hex, 16))
					),
				'latin1'
			).toString('utf8');
		default:
			return body;
	}
}
