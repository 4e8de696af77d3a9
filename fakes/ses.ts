/**
 * Local fake of Amazon SES (the v1 query API that `@aws-sdk/client-ses` speaks). It accepts the
 * SDK's real SendEmail and SendRawEmail requests, answers with SES's XML, and keeps every
 * message so tests and the app's dev mailbox can look at them.
 *
 * Point the SDK at it with
 * `new SESClient({ region, endpoint: url, credentials: { accessKeyId: 'x', secretAccessKey: 'y' } })`.
 */
import { randomUUID } from 'node:crypto';
import { appendFileSync, existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import { dirname } from 'node:path';
import { closeServer, escapeHtml, listen, readBody, sendJson } from './lib/http';
import {
	bareAddress,
	isValidAddress,
	memberList,
	parseRawMessage,
	splitAddressList
} from './ses/parse';

/** One stored e-mail. Addresses are kept as the sender wrote them (display names included). */
export interface FakeSesMessage {
	/** The MessageId returned to the SDK. */
	id: string;
	action: 'SendEmail' | 'SendRawEmail';
	from: string;
	to: string[];
	cc: string[];
	bcc: string[];
	replyTo: string[];
	subject: string;
	/** Plain-text part, or null when the message had none. */
	text: string | null;
	/** HTML part, or null when the message had none. */
	html: string | null;
	/** ISO 8601 time the fake accepted the message. */
	receivedAt: string;
}

/** Options for {@link startFakeSes}. */
export interface FakeSesOptions {
	/** Port to listen on; 0 picks a free one (see `url`). */
	port: number;
	/** Address to bind; loopback unless told otherwise. */
	host?: string;
	/**
	 * JSON-lines file that receives one line per message, so another process (the app's dev
	 * mailbox) can read them. Existing lines are loaded at start; clearing empties the file.
	 */
	storeFile?: string;
}

/** A running fake SES. */
export interface FakeSes {
	/** Base URL, e.g. `http://127.0.0.1:4579`; use it as the SDK's `endpoint`. */
	url: string;
	/** Stops listening and drops open connections. */
	close(): Promise<void>;
	/** Stored messages, newest first (a copy). */
	messages(): FakeSesMessage[];
	/** Forgets every message and empties the store file. */
	clear(): void;
}

const XMLNS = 'http://ses.amazonaws.com/doc/2010-12-01/';
/** SES refuses more than 50 recipients per message; the fake does too, so the app meets it here first. */
const MAX_RECIPIENTS = 50;

/** An error SES would answer with: HTTP status, error code and message. */
class SesError extends Error {
	constructor(
		readonly code: string,
		message: string,
		readonly status = 400
	) {
		super(message);
	}
}

/** Starts the fake SES server. Resolves once it is listening. */
export async function startFakeSes(options: FakeSesOptions): Promise<FakeSes> {
	const host = options.host ?? '127.0.0.1';
	const storeFile = options.storeFile;
	// A missing folder would otherwise fail only at the first e-mail, far from its cause.
	if (storeFile) mkdirSync(dirname(storeFile), { recursive: true });
	// Oldest first internally; every reader gets newest first.
	const stored: FakeSesMessage[] = storeFile ? loadStore(storeFile) : [];

	const keep = (message: FakeSesMessage) => {
		stored.push(message);
		// Synchronous on purpose: the line is on disk before the SDK gets its answer, so the app
		// can read its own e-mail right after sending it.
		if (storeFile) appendFileSync(storeFile, JSON.stringify(message) + '\n');
	};
	const clear = () => {
		stored.length = 0;
		if (storeFile) writeFileSync(storeFile, '');
	};
	const newestFirst = () => stored.slice().reverse();

	const server = createServer((req, res) => {
		handle(req, res).catch((err: unknown) => {
			if (!res.headersSent) {
				sendXmlError(res, new SesError('InternalFailure', `fake SES failed: ${String(err)}`, 500));
			} else {
				res.destroy();
			}
		});
	});

	async function handle(req: IncomingMessage, res: ServerResponse): Promise<void> {
		const url = new URL(req.url ?? '/', 'http://fake.local');
		if (url.pathname === '/_fake/messages' || url.pathname.startsWith('/_fake/messages/')) {
			handleControl(req, res, url);
			return;
		}
		if (url.pathname !== '/' || req.method !== 'POST') {
			sendXmlError(
				res,
				new SesError(
					'InvalidAction',
					`The fake SES answers POST / (SES query API) and /_fake/messages; not ${req.method} ${url.pathname}.`,
					404
				)
			);
			return;
		}
		const params = new URLSearchParams(await readBody(req));
		try {
			// The SDK always signs its requests; a request without a signature did not come from it.
			if (!String(req.headers.authorization ?? '').startsWith('AWS4-HMAC-SHA256')) {
				throw new SesError(
					'MissingAuthenticationToken',
					'Request is missing an AWS Signature Version 4 Authorization header; send it through the AWS SDK.',
					403
				);
			}
			const action = params.get('Action');
			let message: FakeSesMessage;
			if (action === 'SendEmail') message = sendEmail(params);
			else if (action === 'SendRawEmail') message = sendRawEmail(params);
			else
				throw new SesError(
					'InvalidAction',
					`The fake SES implements SendEmail and SendRawEmail only, not ${action ?? '(no Action)'}.`
				);
			keep(message);
			sendXml(
				res,
				200,
				`<${action}Response xmlns="${XMLNS}"><${action}Result><MessageId>${message.id}</MessageId></${action}Result><ResponseMetadata><RequestId>${randomUUID()}</RequestId></ResponseMetadata></${action}Response>`
			);
		} catch (err) {
			if (err instanceof SesError) sendXmlError(res, err);
			else throw err;
		}
	}

	function handleControl(req: IncomingMessage, res: ServerResponse, url: URL): void {
		// The dev mailbox may fetch this from a browser page on another port.
		res.setHeader('access-control-allow-origin', '*');
		const id = url.pathname.slice('/_fake/messages/'.length);
		if (req.method === 'GET' && url.pathname === '/_fake/messages') {
			const to = url.searchParams.get('to');
			const wanted = to ? bareAddress(to) : null;
			const list = newestFirst().filter(
				(m) => !wanted || [...m.to, ...m.cc, ...m.bcc].some((a) => bareAddress(a) === wanted)
			);
			sendJson(res, 200, list);
		} else if (req.method === 'GET' && id) {
			const found = stored.find((m) => m.id === id);
			if (found) sendJson(res, 200, found);
			else sendJson(res, 404, { error: `no message with id ${id}` });
		} else if (req.method === 'DELETE' && url.pathname === '/_fake/messages') {
			clear();
			res.writeHead(204).end();
		} else {
			sendJson(res, 405, {
				error:
					'use GET /_fake/messages[?to=address], GET /_fake/messages/:id or DELETE /_fake/messages'
			});
		}
	}

	const url = await listen(server, options.port, host, 'fake SES', 'FAKE_SES_PORT');
	return {
		url,
		close: () => closeServer(server),
		messages: newestFirst,
		clear
	};
}

function sendEmail(params: URLSearchParams): FakeSesMessage {
	const from = required(params, 'Source', 'the sender address');
	const to = memberList(params, 'Destination.ToAddresses');
	const cc = memberList(params, 'Destination.CcAddresses');
	const bcc = memberList(params, 'Destination.BccAddresses');
	const replyTo = memberList(params, 'ReplyToAddresses');
	checkRecipients([...to, ...cc, ...bcc]);
	checkAddresses([from, ...to, ...cc, ...bcc, ...replyTo]);
	const subject = required(params, 'Message.Subject.Data', 'the subject');
	const text = params.get('Message.Body.Text.Data');
	const html = params.get('Message.Body.Html.Data');
	if (text === null && html === null) {
		throw new SesError(
			'ValidationError',
			'Message.Body needs a Text or an Html part (Message.Body.Text.Data or Message.Body.Html.Data).'
		);
	}
	return { ...newMessage('SendEmail', from), to, cc, bcc, replyTo, subject, text, html };
}

function sendRawEmail(params: URLSearchParams): FakeSesMessage {
	const data = required(params, 'RawMessage.Data', 'the raw MIME message');
	const raw = parseRawMessage(Buffer.from(data, 'base64').toString('utf8'));
	const header = (name: string) => raw.headers.get(name) ?? '';
	const from = params.get('Source') ?? header('from');
	if (!from) throw new SesError('ValidationError', 'Give a Source parameter or a From header.');
	const to = splitAddressList(header('to'));
	const cc = splitAddressList(header('cc'));
	// Envelope recipients that no header names are, in effect, blind copies.
	const named = new Set([...to, ...cc].map(bareAddress));
	const bcc = memberList(params, 'Destinations').filter((a) => !named.has(bareAddress(a)));
	checkRecipients([...to, ...cc, ...bcc]);
	checkAddresses([from, ...to, ...cc, ...bcc]);
	return {
		...newMessage('SendRawEmail', from),
		to,
		cc,
		bcc,
		replyTo: splitAddressList(header('reply-to')),
		subject: decodeEncodedWords(header('subject')),
		text: raw.text,
		html: raw.html
	};
}

function newMessage(action: FakeSesMessage['action'], from: string) {
	return {
		// Shaped like a real SES MessageId so log parsers see something familiar.
		id: `0100${Date.now().toString(16)}-${randomUUID()}-000000`,
		action,
		from,
		receivedAt: new Date().toISOString()
	};
}

function required(params: URLSearchParams, name: string, what: string): string {
	const value = params.get(name);
	if (value === null || value === '') {
		throw new SesError(
			'ValidationError',
			`${name} is required (${what}) but was missing or empty.`
		);
	}
	return value;
}

function checkRecipients(all: string[]): void {
	if (all.length === 0) {
		throw new SesError(
			'ValidationError',
			'No recipients: give at least one address in Destination.ToAddresses, CcAddresses or BccAddresses.'
		);
	}
	if (all.length > MAX_RECIPIENTS) {
		throw new SesError(
			'InvalidParameterValue',
			`Too many recipients (${all.length}); SES accepts at most ${MAX_RECIPIENTS} per message.`
		);
	}
}

function checkAddresses(addresses: string[]): void {
	const bad = addresses.find((a) => !isValidAddress(a));
	if (bad !== undefined) {
		throw new SesError(
			'InvalidParameterValue',
			`Not a valid e-mail address: ${JSON.stringify(bad)}.`
		);
	}
}

/** Decodes RFC 2047 words (`=?UTF-8?B?…?=`), which mail libraries use for non-ASCII subjects. */
function decodeEncodedWords(value: string): string {
	return value.replace(
		/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g,
		(_, _charset: string, kind: string, text: string) =>
			kind.toUpperCase() === 'B'
				? Buffer.from(text, 'base64').toString('utf8')
				: Buffer.from(
						text
							.replace(/_/g, ' ')
							.replace(/=([0-9A-Fa-f]{2})/g, (_m, hex: string) =>
								String.fromCharCode(parseInt(hex, 16))
							),
						'latin1'
					).toString('utf8')
	);
}

function loadStore(file: string): FakeSesMessage[] {
	if (!existsSync(file)) return [];
	const out: FakeSesMessage[] = [];
	for (const line of readFileSync(file, 'utf8').split('\n')) {
		if (!line.trim()) continue;
		try {
			out.push(JSON.parse(line) as FakeSesMessage);
		} catch {
			// A half-written last line from a killed process is not worth refusing to start over.
		}
	}
	return out;
}

function sendXml(res: ServerResponse, status: number, xml: string): void {
	res.writeHead(status, {
		'content-type': 'text/xml',
		'content-length': Buffer.byteLength(xml)
	});
	res.end(xml);
}

function sendXmlError(res: ServerResponse, err: SesError): void {
	const requestId = randomUUID();
	res.setHeader('x-amzn-requestid', requestId);
	// Sender faults are the client's to fix; Receiver faults are ours (the SDK retries those).
	const type = err.status >= 500 ? 'Receiver' : 'Sender';
	sendXml(
		res,
		err.status,
		`<ErrorResponse xmlns="${XMLNS}"><Error><Type>${type}</Type><Code>${escapeHtml(err.code)}</Code><Message>${escapeHtml(err.message)}</Message></Error><RequestId>${requestId}</RequestId></ErrorResponse>`
	);
}
