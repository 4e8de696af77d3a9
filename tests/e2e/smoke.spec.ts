import { expect, test } from '@playwright/test';

test('landing page renders with the shipped Inter font and the app styles', async ({ page }) => {
	const fontRequests: string[] = [];
	page.on('request', (r) => {
		if (r.resourceType() === 'font') fontRequests.push(r.url());
	});
	await page.goto('/');
	await expect(page.getByTestId('landing-title')).toContainText('Every Z number checked');
	await page.evaluate(() => document.fonts.ready);
	// Inter is loaded from the app's own origin, never from outside the machine.
	const interLoaded = await page.evaluate(() => document.fonts.check('16px Inter'));
	expect(interLoaded).toBe(true);
	expect(fontRequests.length).toBeGreaterThan(0);
	for (const url of fontRequests) expect(new URL(url).host).toBe(new URL(page.url()).host);
	const styles = await page.evaluate(() => {
		const body = getComputedStyle(document.body);
		return { family: body.fontFamily, background: body.backgroundColor };
	});
	expect(styles.family).toMatch(/^"?Inter"?/);
	// Tailwind's configured ground colour (#f6f6f4) proves the stylesheet was built and served.
	expect(styles.background).toBe('rgb(246, 246, 244)');
	await expect(page.getByRole('link', { name: 'Sign in' })).toBeVisible();
});

test('/healthz reports the database and Redis as OK', async ({ request }) => {
	const res = await request.get('/healthz');
	expect(res.status()).toBe(200);
	const body = await res.json();
	expect(body).toMatchObject({ status: 'ok', database: { ok: true }, redis: { ok: true } });
});
