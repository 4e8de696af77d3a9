import { SESClient, SendEmailCommand, SendRawEmailCommand } from '@aws-sdk/client-ses';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { startFakeSes, type FakeSes, type FakeSesMessage } from './ses';

describe('fake SES with the real AWS SDK', () => {
	let ses: FakeSes;
	let client: SESClient;
	let dir: string;
	let storeFile: string;

	beforeAll(async () => {
		dir = mkdtempSync(join(tmpdir(), 'fake-ses-'));
		storeFile = join(dir, 'mail.jsonl');
		ses = await startFakeSes({ port: 0, storeFile });
		client = new SESClient({
			region: 'eu-west-1',
			endpoint: ses.url,
			credentials: { accessKeyId: 'local', secretAccessKey: 'local' },
			// One attempt: an error answer must reach the test as is, not after retries.
			maxAttempts: 1
		});
	});

	afterAll(async () => {
		client.destroy();
		await ses.close();
		rmSync(dir, { recursive: true, force: true });
	});

	beforeEach(() => ses.clear());

	it('stores a SendEmail message with its text and HTML parts and returns its id', async () => {
		const out = await client.send(
			new SendEmailCommand({
				Source: 'Datumkeep <no-reply@datumkeep.test>',
				Destination: { ToAddresses: ['owner@fernhill.test'], CcAddresses: ['lead@fernhill.test'] },
				Message: {
					Subject: { Data: 'You are invited to Fernhill Precision', Charset: 'UTF-8' },
					Body: {
						Text: { Data: 'Open https://app.test/invite/abc to join.' },
						Html: { Data: '<p>Open <a href="https://app.test/invite/abc">the invitation</a>.</p>' }
					}
				}
			})
		);
		expect(out.MessageId).toMatch(/^0100[0-9a-f]+-/);
		const [stored] = ses.messages();
		expect(stored).toMatchObject({
			id: out.MessageId,
			action: 'SendEmail',
			from: 'Datumkeep <no-reply@datumkeep.test>',
			to: ['owner@fernhill.test'],
			cc: ['lead@fernhill.test'],
			bcc: [],
			subject: 'You are invited to Fernhill Precision',
			text: 'Open https://app.test/invite/abc to join.',
			html: '<p>Open <a href="https://app.test/invite/abc">the invitation</a>.</p>'
		});

		// Another process reads the same message from the JSON-lines store.
		const lines = readFileSync(storeFile, 'utf8').trim().split('\n');
		expect(lines).toHaveLength(1);
		expect((JSON.parse(lines[0]) as FakeSesMessage).id).toBe(out.MessageId);
	});

	it('lists newest first over HTTP, filters by recipient and clears', async () => {
		for (const to of ['a@shop.test', 'b@shop.test', 'A@Shop.test']) {
			await client.send(
				new SendEmailCommand({
					Source: 'no-reply@datumkeep.test',
					Destination: { ToAddresses: [to] },
					Message: { Subject: { Data: `for ${to}` }, Body: { Text: { Data: 'x' } } }
				})
			);
		}
		const all = (await (await fetch(`${ses.url}/_fake/messages`)).json()) as FakeSesMessage[];
		expect(all.map((m) => m.subject)).toEqual([
			'for A@Shop.test',
			'for b@shop.test',
			'for a@shop.test'
		]);

		const forA = (await (
			await fetch(`${ses.url}/_fake/messages?to=a%40shop.test`)
		).json()) as FakeSesMessage[];
		expect(forA.map((m) => m.subject)).toEqual(['for A@Shop.test', 'for a@shop.test']);

		const cleared = await fetch(`${ses.url}/_fake/messages`, { method: 'DELETE' });
		expect(cleared.status).toBe(204);
		expect(ses.messages()).toEqual([]);
		expect(readFileSync(storeFile, 'utf8')).toBe('');
	});

	it('answers a request without recipients with an SES error the SDK understands, and stores nothing', async () => {
		const attempt = client.send(
			new SendEmailCommand({
				Source: 'no-reply@datumkeep.test',
				Destination: { ToAddresses: [] },
				Message: { Subject: { Data: 'nobody' }, Body: { Text: { Data: 'x' } } }
			})
		);
		await expect(attempt).rejects.toMatchObject({
			name: 'ValidationError',
			message: expect.stringContaining('No recipients'),
			$metadata: { httpStatusCode: 400 }
		});
		expect(ses.messages()).toHaveLength(0);
	});

	it('rejects a malformed address and a message without a body', async () => {
		await expect(
			client.send(
				new SendEmailCommand({
					Source: 'no-reply@datumkeep.test',
					Destination: { ToAddresses: ['not-an-address'] },
					Message: { Subject: { Data: 's' }, Body: { Text: { Data: 'x' } } }
				})
			)
		).rejects.toMatchObject({ name: 'InvalidParameterValue' });
		await expect(
			client.send(
				new SendEmailCommand({
					Source: 'no-reply@datumkeep.test',
					Destination: { ToAddresses: ['a@shop.test'] },
					Message: { Subject: { Data: 's' }, Body: {} }
				})
			)
		).rejects.toMatchObject({
			name: 'ValidationError',
			message: expect.stringContaining('Message.Body')
		});
		expect(ses.messages()).toHaveLength(0);
	});

	it('reads the parts of a SendRawEmail MIME message; envelope-only recipients become bcc', async () => {
		const raw = [
			'From: Datumkeep <no-reply@datumkeep.test>',
			'To: owner@fernhill.test',
			'Subject: =?UTF-8?B?UGF5bWVudCBmYWlsZWQg4oCUIEZlcm5oaWxs?=',
			'MIME-Version: 1.0',
			'Content-Type: multipart/alternative; boundary="b1"',
			'',
			'--b1',
			'Content-Type: text/plain; charset=UTF-8',
			'',
			'Your payment failed.',
			'--b1',
			'Content-Type: text/html; charset=UTF-8',
			'Content-Transfer-Encoding: base64',
			'',
			Buffer.from('<p>Your payment failed.</p>').toString('base64'),
			'--b1--',
			''
		].join('\r\n');
		await client.send(
			new SendRawEmailCommand({
				Destinations: ['owner@fernhill.test', 'admin@fernhill.test'],
				RawMessage: { Data: Buffer.from(raw) }
			})
		);
		expect(ses.messages()[0]).toMatchObject({
			action: 'SendRawEmail',
			from: 'Datumkeep <no-reply@datumkeep.test>',
			to: ['owner@fernhill.test'],
			bcc: ['admin@fernhill.test'],
			subject: 'Payment failed — Fernhill',
			text: 'Your payment failed.',
			html: '<p>Your payment failed.</p>'
		});
	});

	it('refuses unsigned requests and unknown actions with SES error XML', async () => {
		const unsigned = await fetch(ses.url, {
			method: 'POST',
			headers: { 'content-type': 'application/x-www-form-urlencoded' },
			body: 'Action=SendEmail&Source=a%40b.test'
		});
		expect(unsigned.status).toBe(403);
		expect(await unsigned.text()).toContain('<Code>MissingAuthenticationToken</Code>');

		const { GetSendQuotaCommand } = await import('@aws-sdk/client-ses');
		await expect(client.send(new GetSendQuotaCommand({}))).rejects.toMatchObject({
			name: 'InvalidAction',
			message: expect.stringContaining('GetSendQuota')
		});
	});
});

describe('fake SES store file', () => {
	it('loads messages already in the store when it starts again', async () => {
		const dir = mkdtempSync(join(tmpdir(), 'fake-ses-'));
		const storeFile = join(dir, 'mail.jsonl');
		const first = await startFakeSes({ port: 0, storeFile });
		const client = new SESClient({
			region: 'eu-west-1',
			endpoint: first.url,
			credentials: { accessKeyId: 'local', secretAccessKey: 'local' }
		});
		await client.send(
			new SendEmailCommand({
				Source: 'no-reply@datumkeep.test',
				Destination: { ToAddresses: ['a@shop.test'] },
				Message: { Subject: { Data: 'kept' }, Body: { Text: { Data: 'x' } } }
			})
		);
		client.destroy();
		await first.close();
		const second = await startFakeSes({ port: 0, storeFile });
		try {
			expect(second.messages().map((m) => m.subject)).toEqual(['kept']);
		} finally {
			await second.close();
			rmSync(dir, { recursive: true, force: true });
		}
	});

	it('reports a busy port as a one-line cause', async () => {
		const first = await startFakeSes({ port: 0 });
		const port = Number(new URL(first.url).port);
		try {
			await expect(startFakeSes({ port })).rejects.toThrow(/already in use.*FAKE_SES_PORT/);
		} finally {
			await first.close();
		}
	});
});
