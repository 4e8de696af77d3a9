/**
 * Hardening of sign-in and sessions, against the production build: Auth.js's own credentials
 * endpoint is limited and audited like the sign-in page, old cookies die at once, `next=`
 * stays on the site, the CSP is sent, and the dev mailbox shows a person only their own mail.
 */
import { expect, request, test, type APIRequestContext } from '@playwright/test';
import { baseURL, FERNHILL, mailsTo, signedInClient, signUpLink } from './helpers';

const PASSWORD = 'security-spec-pass-1';

/** A new person with a new shop (signed up through the real form), signed in. */
async function newOwner(
	tag: string
): Promise<{ email: string; slug: string; ctx: APIRequestContext }> {
	const stamp = `${Date.now()}-${Math.floor(Math.random() * 1e6)}`;
	const email = `sec-${tag}-${stamp}@example.test`;
	const slug = `sec-${tag}-${stamp}`.slice(0, 40);
	const ctx = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
	const res = await ctx.post('/signup', {
		form: { name: 'Sec Tester', email, password: PASSWORD, shopName: `Sec ${tag}`, shopSlug: slug },
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	expect(res.status()).toBe(200);
	expect(await res.text()).toContain('Check your e-mail');
	// The e-mailed link and the password chosen make the shop and sign in.
	const done = await ctx.post(await signUpLink(email), {
		form: { password: PASSWORD },
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	expect([302, 303]).toContain(done.status());
	expect(done.headers()['location']).toContain(`/shops/${slug}`);
	return { email, slug, ctx };
}

async function signedIn(ctx: APIRequestContext): Promise<boolean> {
	// /shops answers the list, or goes straight to the only shop; signed out, it goes to /signin.
	const res = await ctx.get('/shops', { maxRedirects: 0 });
	if (res.status() === 200) return true;
	return res.status() === 303 && !(res.headers()['location'] ?? '').includes('/signin');
}

/** A second client holding exactly the same cookies (a stolen or copied session). */
async function copyOf(ctx: APIRequestContext): Promise<APIRequestContext> {
	return request.newContext({ baseURL, storageState: await ctx.storageState() });
}

/**
 * One POST straight to Auth.js's credentials callback, as a script would send it (Auth.js's
 * own CSRF token is off under SvelteKit, which checks the Origin header instead; a script sets it).
 */
async function postCredentials(ctx: APIRequestContext, email: string, password: string) {
	const res = await ctx.post('/auth/callback/credentials', {
		form: { email, password, callbackUrl: `${baseURL}/shops` },
		headers: { Origin: baseURL },
		maxRedirects: 0
	});
	const cookies = (await ctx.storageState()).cookies.filter((c) =>
		/authjs\.session-token/.test(c.name)
	);
	return {
		status: res.status(),
		location: res.headers()['location'] ?? '',
		session: cookies.length > 0
	};
}

test('POST /auth/callback/credentials meets the same limit and audit as the sign-in page', async () => {
	const { email, slug, ctx: owner } = await newOwner('direct');
	const script = await request.newContext({ baseURL });
	for (let i = 1; i <= 4; i++) {
		const r = await postCredentials(script, email, `wrong-password-${i}`);
		expect(r.session).toBe(false);
		expect(r.location).toContain('code=credentials');
	}
	const fifth = await postCredentials(script, email, 'wrong-password-5');
	expect(fifth.location).toContain('code=rate-limited');
	// Paused: even the right password gets no session through the endpoint (it did before).
	const right = await postCredentials(script, email, PASSWORD);
	expect(right.session).toBe(false);
	expect(right.location).toContain('code=rate-limited');
	expect(await signedIn(script)).toBe(false);
	// The sign-in page says so, with when to try again.
	const page = await script.get(right.location);
	expect(await page.text()).toContain('Too many failed sign-ins');
	const form = await script.post('/signin', {
		form: { email, password: PASSWORD, next: '' },
		headers: { Origin: baseURL, accept: 'text/html' },
		maxRedirects: 0
	});
	expect(form.status()).toBe(429);
	expect(await form.text()).toMatch(/Try again at \d\d:\d\d UTC/);
	// Every failure is in the shop's audit log.
	const audit = await (await owner.get(`/shops/${slug}/audit`)).text();
	expect(audit.match(/member\.sign-in-failed/g)?.length ?? 0).toBeGreaterThanOrEqual(5);
});

test('a copied session cookie stops working at once after sign-out and after a password reset', async () => {
	const { email, ctx } = await newOwner('gen');
	const stolen = await copyOf(ctx);
	expect(await signedIn(stolen)).toBe(true);
	const out = await ctx.post('/signout', {
		form: {},
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	expect([302, 303]).toContain(out.status());
	expect(await signedIn(stolen)).toBe(false);

	const again = await signedInClient(email, PASSWORD);
	const copy = await copyOf(again);
	expect(await signedIn(copy)).toBe(true);
	const anon = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
	// The sign-up link came by mail too: wait for the reset mail itself, not any mail.
	const resetLink = async () =>
		(await mailsTo(email))
			.map((m) => m.text?.match(/https?:\/\/\S+\/reset\/\S+/)?.[0])
			.find((link) => link !== undefined);
	await anon.post('/reset', { form: { email }, headers: { accept: 'text/html' } });
	await expect.poll(resetLink).toBeTruthy();
	const path = new URL((await resetLink())!).pathname;
	const done = await anon.post(path, {
		form: { password: 'a-brand-new-pass-2' },
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	expect(done.status()).toBe(303);
	expect(await signedIn(copy)).toBe(false);
	expect(await signedIn(again)).toBe(false);
});

test('next= after sign-in only follows same-origin paths', async () => {
	const { email } = await newOwner('next');
	for (const next of [
		'/%09/evil.example',
		'//evil.example',
		'/\\evil.example',
		'/%5Cevil.example'
	]) {
		const ctx = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
		const res = await ctx.post('/signin', {
			form: { email, password: PASSWORD, next },
			headers: { accept: 'text/html' },
			maxRedirects: 0
		});
		const location = new URL(res.headers()['location'], baseURL);
		expect(location.origin, next).toBe(new URL(baseURL).origin);
		expect(location.pathname, next).toBe('/shops');
	}
});

test('pages carry a Content-Security-Policy', async () => {
	const ctx = await request.newContext({ baseURL });
	for (const path of ['/', '/signin']) {
		const csp = (await ctx.get(path)).headers()['content-security-policy'] ?? '';
		expect(csp, path).toContain("script-src 'self'");
		expect(csp, path).toContain("frame-ancestors 'none'");
		expect(csp, path).toContain("object-src 'none'");
	}
});

test('the dev mailbox needs sign-in and shows a person only their own mail', async () => {
	const anon = await request.newContext({ baseURL });
	const res = await anon.get('/dev/mailbox', { maxRedirects: 0 });
	expect(res.status()).toBe(303);
	expect(res.headers()['location']).toContain('/signin');
	// A reset link for someone else is sent; Ada must not see it.
	const { email } = await newOwner('mail');
	const other = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
	await other.post('/reset', { form: { email }, headers: { accept: 'text/html' } });
	// The reset mail itself (the sign-up link was mailed to the same address before it).
	await expect
		.poll(async () => (await mailsTo(email)).some((m) => m.text?.includes('/reset/')))
		.toBe(true);
	const ada = await signedInClient(FERNHILL.owner);
	const html = await (await ada.get('/dev/mailbox')).text();
	expect(html).not.toContain(email);
	expect(html).not.toContain('/reset/');
});

test('a NUL byte or a text/plain body gets 400 with a sentence, never a bare 500', async () => {
	const ctx = await request.newContext({ baseURL, extraHTTPHeaders: { Origin: baseURL } });
	const slug = await ctx.get('/shops/fern%00hill');
	expect(slug.status()).toBe(400);
	expect(await slug.text()).toContain('NUL character');
	const query = await ctx.get('/api/v1/shops/fernhill-precision/setups?state=pl%00anned');
	expect(query.status()).toBe(400);
	const field = await ctx.post('/signup', {
		form: { name: 'Nul\u0000Name', email: 'nul@example.test', password: 'x', shopName: 'N' },
		headers: { accept: 'text/html' }
	});
	expect(field.status()).toBe(400);
	expect(await field.text()).toContain('The field "name" contains a NUL character');
	const plain = await ctx.post('/signin', {
		data: 'email=ada@fernhill.example&password=x',
		headers: { 'content-type': 'text/plain', accept: 'text/html' }
	});
	expect(plain.status()).toBe(400);
	expect(await plain.text()).toContain('Forms must be sent as application/x-www-form-urlencoded');
});

test('JSON API query numbers are read strictly too', async () => {
	const ada = await signedInClient(FERNHILL.owner);
	const bad = await ada.get('/api/v1/shops/fernhill-precision/machines/1/readings?limit=20abc');
	expect(bad.status()).toBe(400);
	expect((await bad.json()).message).toContain(
		'limit must be a whole number; "20abc" is not a whole number'
	);
	const comma = await ada.get('/api/v1/shops/fernhill-precision/setups?machine=1,5');
	expect(comma.status()).toBe(400);
	expect((await comma.json()).message).toContain('"1,5" has a comma');
	const good = await ada.get('/api/v1/shops/fernhill-precision/machines/1/readings?limit=2');
	expect(good.status()).toBe(200);
	expect((await good.json()).rows.length).toBeLessThanOrEqual(2);
});
