import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL } from './helpers';

/**
 * Reading flows as the demo users, on a tablet-sized screen: an operator re-measures a broken
 * tool on Mill 1 and sees the jump before saving, bad input is refused with the field named,
 * history and drift chart show the new value, and another operator's reading appears on an
 * open history page without a reload.
 */
const SHOP = `/shops/${FERNHILL.slug}`;
const MILL1 = `${SHOP}/machines/1`;
const shot = (page: Page, name: string) =>
	page.screenshot({ path: `.data/test/screenshots/${name}.png`, fullPage: true });

async function signIn(page: Page, email: string) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops\//);
}

/** The value in a "-14.7502 in" text. */
const valueOf = async (page: Page) =>
	Number((await page.getByTestId('current-value').innerText()).replace(/[^\d.-]/g, ''));

test.use({ viewport: { width: 1024, height: 1366 } });

test('an operator re-measures T2 after a break: jump shown first, saved as a tool change with a reason', async ({
	page
}) => {
	await signIn(page, FERNHILL.operator);
	await page.goto(MILL1);
	const t2 = page.getByTestId('tools-table').getByRole('row').filter({ hasText: 'T2' });
	await t2.getByRole('link', { name: 'Touch off' }).click();
	await expect(page.getByRole('heading', { name: /Touch off T2/ })).toBeVisible();
	await expect(page.getByTestId('cautions')).toBeVisible();

	// Bad input: a non-number, then a reading past the Z travel; each names the field, nothing saved.
	const z = page.getByRole('textbox', { name: /^Machine Z/ });
	await z.fill('14,75x');
	await page.getByRole('button', { name: 'Work out offset' }).click();
	await expect(
		page.getByRole('alert').filter({ hasText: 'Machine Z must be a number' })
	).toBeVisible();
	await expect(page.getByRole('button', { name: /Save reading/ })).toHaveCount(0);
	await z.fill('-25.0000');
	await page.getByRole('button', { name: 'Work out offset' }).click();
	await expect(page.getByRole('alert').filter({ hasText: /outside the Z travel/ })).toBeVisible();
	await shot(page, 'readings-bad-input');

	// 0.0500 in longer than the value on record, not marked as a tool change: the jump finding.
	const current = await valueOf(page);
	const entered = (current + 0.05).toFixed(4);
	await z.fill(entered);
	await page.getByRole('button', { name: 'Work out offset' }).click();
	const preview = page.getByTestId('preview');
	await expect(preview).toContainText(`${entered} in`);
	await expect(preview.locator('[data-kind="jump"]')).toContainText('no tool change was recorded');
	await expect(preview).toContainText('not saved yet');
	await shot(page, 'readings-jump-preview');

	// It was a new end mill: mark the change. The reason is required, then no jump.
	await page.getByText('The tool was changed').click();
	await expect(page.getByRole('button', { name: /Save reading/ })).toHaveCount(0);
	await page.getByRole('button', { name: 'Work out offset' }).click();
	await expect(page.getByRole('alert').filter({ hasText: 'Say what changed' })).toBeVisible();
	await page.getByLabel(/Reason/).fill('End mill broke in op A; replaced with a new one.');
	await page.getByRole('button', { name: 'Work out offset' }).click();
	await expect(preview.locator('[data-kind="jump"]')).toHaveCount(0);
	await expect(preview).toContainText('No findings');
	await page.getByRole('button', { name: 'Save reading and H2' }).click();

	await expect(page).toHaveURL(/\/history\/tool\/2\?saved=\d+/);
	await expect(page.getByTestId('saved')).toContainText(`${entered} in`);
	const first = page.getByTestId('history-table').locator('tbody tr').first();
	await expect(first).toContainText(`${entered} in`);
	await expect(first).toContainText('+0.0500 in');
	await expect(first).toContainText('Re-measure');
	await expect(first).toContainText('End mill broke in op A');
	await expect(first).toContainText('Omar Lindqvist');
	await expect(page.getByTestId('drift-chart')).toBeVisible();
	await expect(page.getByTestId('cautions')).toBeVisible();
	await shot(page, 'readings-history-h2');
});

test('a part-top touch-off, and a reading by another operator shows on an open history page', async ({
	page,
	browser
}) => {
	await signIn(page, FERNHILL.lead);
	await page.goto(`${MILL1}/history/work/G55`);
	const before = await valueOf(page);

	const other = await browser.newContext({ viewport: { width: 1024, height: 1366 } });
	const p2 = await other.newPage();
	await signIn(p2, 'bea@fernhill.example');
	await p2.goto(MILL1);
	await p2
		.getByTestId('fixtures-table')
		.getByRole('row')
		.filter({ hasText: 'G55' })
		.getByRole('link', { name: 'Touch off part top' })
		.click();
	await expect(p2.getByRole('heading', { name: /part top of G55/ })).toBeVisible();
	await p2.getByLabel('Tool that touched').selectOption('1'); // T1, H1
	// 0.0010 in from before, through a 0.1000 in gauge block.
	const h1 = -15.8421;
	const z = (before + h1 + 0.1 + 0.001).toFixed(4);
	await p2.getByRole('textbox', { name: /^Machine Z/ }).fill(z);
	await p2.getByLabel('Tip touched').selectOption('gauge block');
	await p2.getByRole('textbox', { name: /^Block height/ }).fill('0.1000');
	await p2.getByRole('button', { name: 'Work out offset' }).click();
	await expect(p2.getByTestId('preview')).toContainText('G55 Z = machine Z');
	await shot(p2, 'readings-part-top-preview');
	await p2.getByRole('button', { name: 'Save reading and G55' }).click();
	await expect(p2).toHaveURL(/\/history\/work\/G55\?saved=/);
	await other.close();

	// The lead's page was never reloaded: the query polls the JSON API.
	const expected = (before + 0.001).toFixed(4);
	await expect(page.getByTestId('history-table').locator('tbody tr').first()).toContainText(
		`${expected} in`,
		{ timeout: 20_000 }
	);
	await expect(page.getByTestId('current-value')).toContainText(`${expected} in`, {
		timeout: 20_000
	});
	await expect(page.getByTestId('history-table')).toContainText('Bea Novak');
	await shot(page, 'readings-history-g55-live');
	await page.goto(MILL1);
	await expect(page.getByTestId('recent-readings')).toContainText('G55 part top');
	await shot(page, 'readings-machine-page');
});

test('a lead sees what becomes stale before re-establishing Mill 2’s reference', async ({
	page
}) => {
	await signIn(page, FERNHILL.lead);
	await page.goto(`${SHOP}/machines/2/reference`);
	await page.getByRole('button', { name: 'Show what changes' }).click();
	await expect(page.getByRole('alert').filter({ hasText: 'Say why' })).toBeVisible();
	await page.getByLabel(/Why/).fill('Block re-seated after cleaning the table.');
	await page.getByRole('button', { name: 'Show what changes' }).click();
	const preview = page.getByTestId('preview');
	await expect(preview).toContainText('will be marked stale');
	await expect(preview).toContainText('H1');
	await shot(page, 'readings-reference-preview');
	await page.getByRole('button', { name: /Record reference v\d/ }).click();
	await expect(page).toHaveURL(/\/machines\/2\?reference=new/);
	await expect(page.getByTestId('tools-table')).toContainText('Stale');
});
