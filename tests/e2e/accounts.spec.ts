import { expect, test } from '@playwright/test';
import { baseURL, DEMO_PASSWORD, FERNHILL, mailsTo, signUpLink } from './helpers';

async function signIn(
	page: import('@playwright/test').Page,
	email: string,
	password = DEMO_PASSWORD
) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
}

test('the owner invites an operator, who accepts from the e-mail and sees only what an operator may', async ({
	page,
	browser
}) => {
	const invitee = `e2e-op-${Date.now()}@example.test`;
	await signIn(page, FERNHILL.owner);
	await expect(page).toHaveURL(/\/shops\/fernhill-precision$/);
	await page.getByRole('link', { name: 'Members' }).click();
	await page.getByLabel('E-mail').fill(invitee);
	await page.getByLabel('Role', { exact: true }).selectOption('operator');
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByRole('status')).toContainText(`Invitation sent to ${invitee}`);
	await expect(page.getByTestId('invitations-table')).toContainText(invitee);

	// The message arrived in the fake SES store, with a link.
	await expect.poll(async () => (await mailsTo(invitee)).length).toBe(1);
	const [mail] = await mailsTo(invitee);
	expect(mail.subject).toContain('Fernhill Precision');
	const link = mail.text!.match(/https?:\/\/\S+\/invitations\/\S+/)![0];

	const ctx = await browser.newContext();
	const p2 = await ctx.newPage();
	await p2.goto(new URL(link).pathname);
	await expect(p2.getByRole('heading', { name: 'Join Fernhill Precision' })).toBeVisible();
	// Bad input first: a weak password is refused with the rule, nothing is created.
	await p2.getByLabel('Your name').fill('Erin Example');
	await p2.getByLabel('Choose a password').fill('short');
	await p2.getByRole('button', { name: 'Create my account and join' }).click();
	await expect(p2.getByText(/Password too short/)).toBeVisible();
	await p2.getByLabel('Choose a password').fill('spindle-safe-42');
	await p2.getByRole('button', { name: 'Create my account and join' }).click();
	await expect(p2).toHaveURL(/\/shops\/fernhill-precision$/);
	await expect(p2.getByRole('heading', { name: 'Machines' })).toBeVisible();
	// Operator: no Members or Audit log in the navigation, and the server refuses them too.
	const nav = p2.getByRole('navigation', { name: 'Shop' });
	await expect(nav.getByRole('link', { name: 'Members' })).toHaveCount(0);
	await expect(nav.getByRole('link', { name: 'Audit log' })).toHaveCount(0);
	const res = await p2.goto('/shops/fernhill-precision/members');
	expect(res?.status()).toBe(403);

	// The link is single-use.
	await p2.goto(new URL(link).pathname);
	await expect(p2.getByRole('alert')).toContainText('already been accepted');

	// A role change and a removal hold on the member's very next request (the server keeps
	// who-may-see-what in memory between changes; a change must reach it at once).
	await page.reload();
	const row = page.getByTestId('members-table').locator('tr', { hasText: invitee });
	await row.getByLabel(/^Role of /).selectOption('admin');
	await row.getByRole('button', { name: 'Change' }).click();
	await expect(row.getByLabel(/^Role of /)).toHaveValue('admin');
	// The select shows the choice at once; wait for the server's answer before p2 looks.
	await expect(page.getByText('Role changed.')).toBeVisible();
	expect((await p2.goto('/shops/fernhill-precision/members'))?.status()).toBe(200);
	await row.getByRole('button', { name: /^Remove / }).click();
	// Removal asks first, naming the person.
	await page
		.getByTestId('confirm-remove')
		.getByRole('button', { name: 'Remove Erin Example' })
		.click();
	await expect(page.getByTestId('members-table')).not.toContainText(invitee);
	// Removal ends the person's sessions at once (session generation): back to the sign-in page.
	await p2.goto('/shops/fernhill-precision');
	await expect(p2).toHaveURL(/\/signin/);
	await ctx.close();
});

test('wrong password gets one generic message; repeated failures are rate-limited', async ({
	page
}) => {
	// June (Quarry Road) is used by no other test, so blocking her sign-in for 15 minutes is safe.
	const email = 'june@quarryroad.example';
	await signIn(page, email, 'not-her-password-1');
	await expect(page.getByText('E-mail or password is not right.')).toBeVisible();
	await signIn(page, 'nobody-here@fernhill.example', 'not-a-password-1');
	await expect(page.getByText('E-mail or password is not right.')).toBeVisible();
	for (let i = 0; i < 5; i++) await signIn(page, email, `wrong-${i}-password`);
	await expect(page.getByRole('alert')).toContainText('Too many failed sign-ins');
	await expect(page.getByRole('alert')).toContainText(/Try again at \d\d:\d\d UTC/);
	// Even the right password is refused while blocked.
	await signIn(page, email, DEMO_PASSWORD);
	await expect(page.getByRole('alert')).toContainText('Too many failed sign-ins');
});

test('sign-up creates a shop with its owner; bad input names the field and changes nothing', async ({
	page
}) => {
	const email = `founder-${Date.now()}@example.test`;
	await page.goto('/signup');
	await page.getByLabel('Your name').fill('Fay Founder');
	await page.getByLabel('E-mail').fill('not-an-email');
	await page.getByLabel('Password').fill('abc');
	await page.getByLabel('Shop name').fill('Founders Mill Works');
	await page.getByLabel('Web address of the shop (optional)').fill('fernhill-precision');
	await page.getByRole('button', { name: 'Create the shop' }).click();
	await expect(page.getByText(/not an e-mail address/)).toBeVisible();
	await expect(page.getByText(/Password too short/)).toBeVisible();

	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill('founders-pass-7');
	await page.getByRole('button', { name: 'Create the shop' }).click();
	await expect(page.getByText('The web address "fernhill-precision" is taken')).toBeVisible();

	await page.getByLabel('Web address of the shop (optional)').fill('');
	await page.getByRole('button', { name: 'Create the shop' }).click();
	await expect(page.getByRole('heading', { name: 'Check your e-mail' })).toBeVisible();
	await expect(page.getByTestId('signup-sent')).toContainText(
		`We sent a link to ${email} to finish starting Founders Mill Works.`
	);
	// Nothing exists until the e-mailed link is followed with the password chosen.
	await page.goto(await signUpLink(email));
	await expect(page.getByText('/shops/founders-mill-works')).toBeVisible();
	await page.getByLabel('Password').fill('not-the-pass-1');
	await page.getByRole('button', { name: 'Start the shop' }).click();
	await expect(page.getByRole('alert')).toContainText('not the password you chose');
	await page.getByLabel('Password').fill('founders-pass-7');
	await page.getByRole('button', { name: 'Start the shop' }).click();
	// Provisioning the shop's schema takes a few seconds on a busy machine.
	await expect(page).toHaveURL(/\/shops\/founders-mill-works$/, { timeout: 30_000 });
	await expect(page.getByTestId('shop-switcher')).toContainText('Founders Mill Works');
	await page.getByRole('link', { name: 'Audit log' }).click();
	await expect(page.getByTestId('audit-table')).toContainText('Shop created');
});

test('sign-up answers the same page for an e-mail with an account and a new one', async ({
	playwright
}) => {
	// Before issue 13 a known e-mail got "This e-mail already has an account" and a new one was
	// signed in at once: anyone could tell who has an account.
	const known = FERNHILL.owner;
	const fresh = `enum-${Date.now()}@example.test`;
	const knownMailsBefore = (await mailsTo(known)).length;
	const slug = `enumeration-${Date.now()}`;
	const post = async (email: string) => {
		const ctx = await playwright.request.newContext({
			baseURL,
			extraHTTPHeaders: { Origin: baseURL }
		});
		const res = await ctx.post('/signup', {
			form: {
				name: 'Ena Numeration',
				email,
				password: 'enumeration-pass-1',
				shopName: 'Enumeration Works',
				shopSlug: slug
			},
			headers: { accept: 'text/html' },
			maxRedirects: 0
		});
		// Only the echoed address (and the CSP nonce of the page) may differ.
		const body = (await res.text())
			.replaceAll(email, 'ADDRESS')
			.replace(/nonce-[A-Za-z0-9+/=]+/g, 'nonce')
			.replace(/nonce="[^"]*"/g, 'nonce');
		await ctx.dispose();
		return { status: res.status(), body };
	};
	const a = await post(known);
	const b = await post(fresh);
	expect(a.status).toBe(200);
	expect(b.status).toBe(a.status);
	expect(a.body).toMatch(/We sent a link to <strong[^>]*>ADDRESS<\/strong>/);
	expect(b.body).toBe(a.body);
	// The mail tells them apart, not the page: the known address is told someone tried.
	const toKnown = await mailsTo(known);
	expect(toKnown.length).toBe(knownMailsBefore + 1);
	expect(toKnown[0].subject).toBe('Someone tried to start a shop with your e-mail address');
	expect(await signUpLink(fresh)).toMatch(/^\/signup\/confirm\//);
});

test('sign-up is limited per e-mail: the sixth in an hour is refused and says when to try again', async ({
	playwright
}) => {
	const email = `limit-${Date.now()}@example.test`;
	const ctx = await playwright.request.newContext({
		baseURL,
		extraHTTPHeaders: { Origin: baseURL }
	});
	const post = (i: number) =>
		ctx.post('/signup', {
			form: {
				name: 'Lim Ited',
				email,
				password: 'limited-pass-1',
				shopName: `Limited Works ${i}`
			},
			headers: { accept: 'text/html' },
			maxRedirects: 0
		});
	for (let i = 0; i < 5; i++) expect((await post(i)).status()).toBe(200);
	const refused = await post(5);
	expect(refused.status()).toBe(429);
	expect(await refused.text()).toMatch(/Too many sign-ups .* Try again at \d\d:\d\d UTC/);
	expect(await mailsTo(email)).toHaveLength(5);
	await ctx.dispose();
});

test('password reset from the e-mailed link; the same answer for an unknown e-mail', async ({
	page
}) => {
	await page.goto('/reset');
	await page.getByLabel('E-mail').fill('no-such-person@example.test');
	await page.getByRole('button', { name: 'Send a reset link' }).click();
	const same = 'If that e-mail has an account, a reset link is on its way.';
	await expect(page.getByRole('status')).toContainText(same);

	await page.goto('/reset');
	await page.getByLabel('E-mail').fill('june@quarryroad.example');
	await page.getByRole('button', { name: 'Send a reset link' }).click();
	await expect(page.getByRole('status')).toContainText(same);
	await expect
		.poll(async () => (await mailsTo('june@quarryroad.example')).length)
		.toBeGreaterThan(0);
	const [mail] = await mailsTo('june@quarryroad.example');
	const path = new URL(mail.text!.match(/https?:\/\/\S+\/reset\/\S+/)![0]).pathname;
	await page.goto(path);
	await page.getByLabel('New password').fill('bea-new-pass-9');
	await page.getByRole('button', { name: 'Set the password' }).click();
	await expect(page).toHaveURL(/\/signin\?reset=1/);
	await page.goto(path);
	await expect(page.getByRole('alert')).toContainText('already been used');
});
