import { SESClient, SendEmailCommand } from '@aws-sdk/client-ses';
import { config } from '../config';

const clients = new Map<string | undefined, SESClient>();

/**
 * The real AWS SDK client. In development and tests its endpoint is the project's fake SES
 * (fakes/ses.ts), with fixed credentials the fake ignores; in production leave SES_ENDPOINT and
 * FAKE_SES_PORT unset to reach AWS, where the SDK finds credentials itself (environment, shared
 * files, instance or task role). One client is kept per endpoint, so a test can move it.
 */
export function ses(): SESClient {
	const { endpoint, region, credentials } = config.ses;
	let client = clients.get(endpoint);
	if (client) return client;
	client = new SESClient({ region, endpoint, ...(credentials && { credentials }) });
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
			Source: config.ses.from,
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
