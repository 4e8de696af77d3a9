import { SESClient, SendEmailCommand } from '@aws-sdk/client-ses';
import { config } from '../config';

const clients = new Map<string | undefined, SESClient>();

/**
 * The real AWS SDK client. In development and tests its endpoint is the project's fake SES
 * (fakes/ses.ts); in production leave SES_ENDPOINT and FAKE_SES_PORT unset to reach AWS.
 * The endpoint is read on every call (one client kept per endpoint), so a test can move it.
 */
export function ses(): SESClient {
	const endpoint = config.sesEndpoint;
	let client = clients.get(endpoint);
	if (client) return client;
	client = new SESClient({
		region: process.env.AWS_REGION ?? 'us-east-1',
		endpoint,
		credentials: {
			accessKeyId: process.env.AWS_ACCESS_KEY_ID ?? 'local-fake',
			secretAccessKey: process.env.AWS_SECRET_ACCESS_KEY ?? 'local-fake'
		}
	});
	clients.set(endpoint, client);
	return client;
}

export interface OutgoingEmail {
	to: string;
	subject: string;
	text: string;
	html: string;
}

export async function sendViaSes(mail: OutgoingEmail): Promise<string | undefined> {
	const out = await ses().send(
		new SendEmailCommand({
			Source: process.env.MAIL_FROM ?? 'Datumkeep <no-reply@datumkeep.test>',
			Destination: { ToAddresses: [mail.to] },
			Message: {
				Subject: { Data: mail.subject, Charset: 'UTF-8' },
				Body: {
					Text: { Data: mail.text, Charset: 'UTF-8' },
					Html: { Data: mail.html, Charset: 'UTF-8' }
				}
			}
		})
	);
	return out.MessageId;
}
