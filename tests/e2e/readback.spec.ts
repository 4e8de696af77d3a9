import { expect, test, type Browser, type Page } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL, mailsTo, QUARRY, signedInClient } from './helpers';

/** Kept as test artifacts, and looked at: `.data/test/screenshots/`. */
const shots = '.data/test/screenshots';
const TABLET = { width: 820, height: 1180 };
const machine = `/shops/${FERNHILL.slug}/machines/1`;

async function signedIn(browser: Browser, email: string): Promise<Page> {
	const context = await browser.newContext({ viewport: TABLET, hasTouch: true });
	const page = await context.newPage();
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops\/fernhill-precision$/);
	return page;
}

/** The same value with its first two different neighbouring digits swapped (-14.7502 → -14.7052). */
function transposed(text: string): string {
	const c = [...text];
	for (let i = c.length - 2; i > 0; i--) {
		if (/\d/.test(c[i]) && /\d/.test(c[i + 1]) && c[i] !== c[i + 1]) {
			[c[i], c[i + 1]] = [c[i + 1], c[i]];
			return c.join('');
		}
	}
	throw new Error(`no digits to swap in ${text}`);
}

test('an operator reads back Mill 1 with one transposed digit, sees why, reads back again and the board turns verified', async ({
	browser
}) => {
	test.setTimeout(120_000);
	const operator = await signedIn(browser, FERNHILL.operator);
	const lead = await signedIn(browser, FERNHILL.lead);

	// The lead keeps the fleet board open: Mill 1's H4 was keyed in wrong (the demo's read-back).
	await lead.goto(`/shops/${FERNHILL.slug}/fleet`);
	const atControl = lead
		.locator('[data-testid="fleet-row"][data-machine="Mill 1"]')
		.getByTestId('at-control');
	await expect(atControl).toContainText('mismatched');

	// What Datumkeep holds now (other specs may have re-measured): the registers' current values.
	const api = await operator.request.get(`/api/v1/shops/${FERNHILL.slug}/machines/1/readbacks`);
	expect(api.status()).toBe(200);
	const { verification } = (await api.json()) as {
		verification: { kind: 'work' | 'tool'; register: string; value: number }[];
	};
	const text = (v: number) => v.toFixed(4);

	await operator.goto(machine);
	await operator.getByRole('link', { name: 'Read back at the control' }).click();
	await expect(operator.getByRole('heading', { name: 'Read back at the control' })).toBeVisible();
	await expect(operator.getByTestId('readback-cautions')).toContainText(
		'not that the setup is right'
	);
	const grid = operator.getByTestId('readback-grid');
	const field = (label: string) => grid.locator(`input[data-register="${label}"]`);
	await expect(field('H2')).toHaveAttribute('inputmode', 'decimal');

	// Type every register as the control shows it; H2 with two digits swapped. Enter moves on.
	const h2 = verification.find((v) => v.kind === 'tool' && v.register === '2')!;
	const wrong = transposed(text(h2.value));
	const labelOf = (v: { kind: string; register: string }) =>
		v.kind === 'tool' ? `H${v.register}` : v.register;
	const ordered = await grid
		.locator('input[data-register]')
		.evaluateAll((els) => els.map((e) => e.getAttribute('data-register')));
	await field(ordered[0]!).focus();
	for (const label of ordered) {
		const v = verification.find((x) => labelOf(x) === label)!;
		await expect(field(label!)).toBeFocused();
		await operator.keyboard.type(label === 'H2' ? wrong : text(v.value));
		await operator.keyboard.press('Enter');
	}
	await expect(grid.getByRole('button', { name: 'Compare and record' })).toBeFocused();
	await operator.keyboard.press('Enter');

	const result = operator.getByTestId('readback-result');
	const row = result.locator('[data-testid="readback-row"][data-register="H2"]');
	await expect(row).toHaveAttribute('data-status', 'different');
	await expect(row.getByTestId('readback-cause').first()).toHaveAttribute(
		'data-cause',
		'transposed-digits'
	);
	await expect(row).toContainText('Two digits swapped');
	await expect(result.locator('[data-status="equal"][data-testid="readback-row"]')).toHaveCount(
		ordered.length - 1
	);
	await expect(
		operator.locator('[data-testid="register-state"][data-register="H2"] [data-state]')
	).toHaveAttribute('data-state', 'mismatched');
	await operator.screenshot({ path: `${shots}/readback-transposed.png`, fullPage: true });

	// The lead sees the mismatch as a Stop finding on Mill 1 at once, and the digest's line.
	await lead.goto(`/shops/${FERNHILL.slug}/findings?machine=1&status=open`);
	const finding = lead
		.getByTestId('finding')
		.filter({ hasText: `H2 at the control holds ${wrong} in` });
	await expect(finding).toHaveCount(1);
	await expect(finding).toContainText('two digits swapped');
	const digests = (await mailsTo(FERNHILL.lead)).filter((m) =>
		/findings? to look at/.test(m.subject)
	);
	expect(digests.length).toBeGreaterThan(0);
	expect(digests.map((d) => d.text).join('\n')).toMatch(
		/H4 — Control holds a different value: H4 at the control holds -14\.3014 in, but Datumkeep computed -14\.3104 in \(likely cause: two digits swapped\)/
	);
	await lead.screenshot({ path: `${shots}/readback-finding-lead.png`, fullPage: true });
	await lead.goto(`/shops/${FERNHILL.slug}/fleet`);

	// Fixed at the control: read back again. The fields keep what was typed; correct H2 only.
	await field('H2').fill(text(h2.value));
	await grid.getByRole('button', { name: 'Compare and record' }).click();
	await expect(result.getByRole('heading')).toContainText(`All ${ordered.length} equal`);
	await expect(
		operator.locator('[data-testid="register-state"][data-register="H2"] [data-state]')
	).toHaveAttribute('data-state', 'verified');
	await operator.screenshot({ path: `${shots}/readback-verified.png`, fullPage: true });

	// The lead's board follows without a reload.
	await expect(atControl).toContainText('Verified', { timeout: 30_000 });
	await expect(atControl).toHaveAttribute('data-mismatched', '0');
	await expect(atControl).toHaveAttribute('data-unverified', '0');
	await lead.screenshot({ path: `${shots}/readback-board.png`, fullPage: true });
	await operator.context().close();
	await lead.context().close();
});

test('the read-back API: operators record a file and get the comparison; bad input is refused; outsiders get 404', async ({
	browser
}) => {
	const operator = await signedIn(browser, FERNHILL.operator);
	const url = `/api/v1/shops/${FERNHILL.slug}/machines/3/readbacks`;
	// Mill 3 (metric, RS274NGC-style): a value without a decimal point is read as whole mm.
	const file = 'G21\r\nG10 L1 P1 Z112480\r\n';
	const res = await operator.request.post(url, {
		multipart: { file: { name: 'h1.ngc', mimeType: 'text/plain', buffer: Buffer.from(file) } }
	});
	expect(res.status()).toBe(201);
	const body = await res.json();
	const row = body.comparison.rows.find((r: { label: string }) => r.label === 'H1');
	expect(row.actual).toBe(112480);
	expect(row.noPoint.text).toBe('112480');
	expect(row.causes[0].kind).toBe('no-decimal-point');
	const bad = await operator.request.post(url, {
		data: { source: 'typed', values: { tools: { '1': '112.4800' } } }
	});
	expect(bad.status()).toBe(400);
	expect((await bad.json()).issues[0].message).toMatch(/H1 has 4 decimals/);
	const list = await operator.request.get(url);
	expect((await list.json()).readbacks[0].id).toBe(body.id);
	await operator.context().close();
	const outsider = await signedInClient(QUARRY.owner);
	expect((await outsider.post(url, { data: {} })).status()).toBe(404);
	expect((await outsider.get(url)).status()).toBe(404);
	await outsider.dispose();
});
