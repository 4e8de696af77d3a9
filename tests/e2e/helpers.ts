import { expect, request, type APIRequestContext, type Page } from '@playwright/test';
import knex, { type Knex } from 'knex';

export const DEMO_PASSWORD = 'datumkeep-demo';
export const baseURL = `http://127.0.0.1:${process.env.PORT ?? 4173}`;

export const FERNHILL = {
	slug: 'fernhill-precision',
	owner: 'ada@fernhill.example',
	admin: 'tomas@fernhill.example',
	lead: 'keiko@fernhill.example',
	operator: 'omar@fernhill.example'
} as const;
export const QUARRY = { slug: 'quarry-road-tool', owner: 'nils@quarryroad.example' } as const;

/** An HTTP client signed in as `email` through the real sign-in form action. */
export async function signedInClient(
	email: string,
	password = DEMO_PASSWORD
): Promise<APIRequestContext> {
	const ctx = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
	const res = await ctx.post('/signin', {
		form: { email, password, next: '/shops' },
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	if (![302, 303].includes(res.status())) {
		throw new Error(`sign-in as ${email} answered ${res.status()}`);
	}
	return ctx;
}

/** Messages the fake SES caught for an address, newest first. */
export async function mailsTo(
	address: string
): Promise<{ subject: string; text: string | null; html: string | null }[]> {
	const res = await fetch(
		`http://127.0.0.1:${process.env.FAKE_SES_PORT ?? 4589}/_fake/messages?to=${encodeURIComponent(address)}`
	);
	return res.json();
}

/** The link in the newest sign-up e-mail to an address (the confirmation page's path). */
export async function signUpLink(address: string): Promise<string> {
	for (let i = 0; i < 50; i++) {
		const [mail] = await mailsTo(address);
		const link = (mail?.text ?? '').match(/https?:\/\/\S+\/signup\/confirm\/[A-Za-z0-9_-]+/)?.[0];
		if (link) return new URL(link).pathname;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`no sign-up link was mailed to ${address}`);
}

/**
 * A stranger signs up through the form and finishes from the e-mailed link with the password
 * chosen; answers the new shop's slug.
 */
export async function signUpThroughForm(
	page: Page,
	name: string,
	email: string,
	shopName: string,
	password: string
): Promise<string> {
	await page.goto('/signup');
	await page.getByLabel('Your name').fill(name);
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByLabel('Shop name').fill(shopName);
	await page.getByRole('button', { name: 'Create the shop' }).click();
	await expect(page.getByTestId('signup-sent')).toContainText(email);
	await page.goto(await signUpLink(email));
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Start the shop' }).click();
	// Provisioning the shop's schema takes a few seconds on a busy machine.
	await expect(page).toHaveURL(/\/shops\/[a-z0-9-]+$/, { timeout: 30_000 });
	return new URL(page.url()).pathname.split('/').pop()!;
}

/** A small pool on the e2e database; refuses any database but a `*_test` one. */
export function openTestDb(): Knex {
	const url = process.env.DATABASE_URL ?? '';
	if (!url || !/_test$/.test(new URL(url).pathname))
		throw new Error('e2e needs the *_test database');
	return knex({ client: 'pg', connection: url, pool: { min: 0, max: 2 } });
}
