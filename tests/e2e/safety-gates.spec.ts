import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL } from './helpers';

/**
 * Safety gates, on a tablet beside the machine (820×1180): a number the checks call
 * Stop or stale never reaches the machine unmarked.
 * Mill 2 (demo): ISO-style, reference-touch, inch; its block was re-set 3 days ago, so G54 and
 * H1 (measured 9 days ago) are stale; H6 (-13.5018 in, 2 days ago) is fine (unless the readings
 * spec re-set the reference again) until an operator types its machine Z with the decimal point
 * one place left (÷10).
 */
const SHOP = `/shops/${FERNHILL.slug}`;
const shot = (page: Page, name: string) =>
	page.screenshot({ path: `.data/test/screenshots/${name}.png`, fullPage: true });

async function signIn(page: Page, email: string) {
	await page.context().clearCookies();
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops\//);
}

/** The Mill 2 setup's page URL, found through the fleet board. */
async function mill2Setup(page: Page): Promise<string> {
	await page.goto(`${SHOP}/fleet`);
	const row = page.locator('[data-testid="fleet-row"][data-machine="Mill 2"]');
	const href = await row.getByRole('link', { name: 'Aluminium bracket' }).getAttribute('href');
	return href!;
}

test.use({ viewport: { width: 820, height: 1180 } });

test('Mill 2 (stale reference): the load program withholds G54 and H1 by default, and says why', async ({
	page
}) => {
	await signIn(page, FERNHILL.operator);
	const setup = await mill2Setup(page);
	await page.goto(setup);
	const withheld = page.getByTestId('load-program-withheld');
	await expect(withheld).toContainText('G54');
	await expect(withheld).toContainText('H1');
	await expect(withheld).toContainText('Measured before the reference was re-set');
	// An operator is not offered the include, and the server refuses it too.
	await expect(page.getByTestId('include-flagged')).toHaveCount(0);
	expect((await page.request.get(`${setup}/load-program?include=flagged`)).status()).toBe(403);

	const text = await (await page.request.get(`${setup}/load-program`)).text();
	expect(text).not.toMatch(/^G10 L2 P1 /m);
	expect(text).not.toMatch(/^G10 L10 P1 /m);
	expect(text).toMatch(/^\(WITHHELD G54 STALE: .*MEASURED BEFORE THE REFERENCE WAS RE-SET/m);
	expect(text).toContain('(WITHHELD H1 STALE: MEASURED BEFORE THE REFERENCE WAS RE-SET');
	// H6 is written unless an earlier spec re-set the reference again (then it is stale too).
	expect(text).toMatch(/^G10 L10 P6 R-13\.5018$|^\(WITHHELD H6 STALE: /m);
	// The machine's whole load program withholds them as well.
	const machineHref = setup.replace(/\/setups\/\d+$/, '');
	await page.goto(`${SHOP}/fleet`);
	const mill2 = await page
		.locator('[data-testid="fleet-row"][data-machine="Mill 2"]')
		.getByRole('link', { name: 'Mill 2' })
		.getAttribute('href');
	const whole = await (await page.request.get(`${mill2}/load-program`)).text();
	expect(whole).toContain('(WITHHELD H1 STALE');
	expect(whole).not.toMatch(/^G10 L10 P1 /m);
	expect(machineHref).toBeTruthy();
});

test('an operator types a ÷10 machine Z: Stop, saved only through the override; the lead sees it, the load program leaves it out or warns, the sheet marks it', async ({
	page
}) => {
	await signIn(page, FERNHILL.operator);
	await page.goto(`${SHOP}/fleet`);
	await page
		.locator('[data-testid="fleet-row"][data-machine="Mill 2"]')
		.getByRole('link', { name: 'Mill 2' })
		.click();
	const t6 = page.getByTestId('tools-table').getByRole('row').filter({ hasText: 'T6' });
	await t6.getByRole('link', { name: 'Touch off' }).click();
	const z = page.getByRole('textbox', { name: /^Machine Z/ });
	// The placeholder shows the format, never a number that could pass for a reading.
	await expect(z).toHaveAttribute('placeholder', 'e.g. -1x.xxxx');
	await z.fill('-1.3502');
	await page.getByRole('button', { name: 'Work out offset' }).click();
	const preview = page.getByTestId('preview');
	await expect(preview.locator('[data-status="stop"]').first()).toBeVisible();
	await expect(preview.locator('[data-kind="decimal-slip"]')).toContainText(
		'-13.5020 in was likely meant'
	);
	// No plain save: only "Save anyway…" behind a confirmation that names the finding.
	await expect(page.getByRole('button', { name: /Save reading/ })).toHaveCount(0);
	await page.getByTestId('save-anyway').click();
	const dialog = page.getByTestId('override-dialog');
	await expect(dialog).toBeVisible();
	await expect(dialog).toContainText('Decimal point probably in the wrong place');
	const confirm = dialog.getByRole('button', { name: 'Save anyway' });
	await expect(confirm).toBeDisabled();
	await shot(page, 'safety-override-dialog');
	await dialog.getByLabel(/Why is this value right/).fill('Holder swapped, the control shows it');
	await confirm.click();

	await expect(page).toHaveURL(/\/history\/tool\/6\?saved=\d+/);
	const saved = page.getByTestId('saved');
	await expect(saved).toContainText('Saved over a Stop');
	await expect(saved).toContainText('Holder swapped, the control shows it');
	await expect(saved).not.toContainText('Enter it at the control');
	await expect(saved).not.toHaveClass(/bg-accent-light/);
	await shot(page, 'safety-override-saved');

	// The lead sees the override on the fleet board.
	await signIn(page, FERNHILL.lead);
	await page.goto(`${SHOP}/fleet`);
	const row = page.locator('[data-testid="fleet-row"][data-machine="Mill 2"]');
	await expect(row).toHaveAttribute('data-health', 'stop');
	await expect(row.getByTestId('fleet-override')).toContainText('H6');
	await expect(row.getByTestId('fleet-override')).toContainText('Omar Lindqvist');
	await expect(page.getByTestId('fleet-legend')).toContainText('Not measured');
	await shot(page, 'safety-fleet-override');

	// The load program leaves H6 out, with a comment; the lead includes it on purpose.
	const setup = await mill2Setup(page);
	await page.goto(setup);
	await expect(page.getByTestId('load-program-withheld')).toContainText('H6');
	await expect(page.getByTestId('gate-H6')).toHaveAttribute('data-status', 'stop');
	const plain = await (await page.request.get(`${setup}/load-program`)).text();
	expect(plain).not.toMatch(/^G10 L10 P6 /m);
	expect(plain).toMatch(/^\(WITHHELD H6 STOP: .*DECIMAL POINT PROBABLY IN THE WRONG PLACE/m);
	await page.getByTestId('include-flagged').locator('summary').click();
	const [download] = await Promise.all([
		page.waitForEvent('download'),
		page.getByTestId('load-program-include').click()
	]);
	const path = await download.path();
	const included = (await import('node:fs')).readFileSync(path!, 'utf8').split('\n');
	const at = included.indexOf('G10 L10 P6 R-1.3502');
	expect(at).toBeGreaterThan(0);
	expect(included[at - 1]).toMatch(
		/^\(WARNING H6 STOP: .*DECIMAL POINT PROBABLY IN THE WRONG PLACE.*INCLUDED BY KEIKO HART - CHECK IT AT THE CONTROL\)$/
	);
	const g54 = included.indexOf('G10 L2 P1 Z1.8250');
	expect(g54).toBeGreaterThan(0);
	expect(included[g54 - 1]).toMatch(/^\(WARNING G54 (STOP|STALE): /);

	// The printed sheet (print media) marks H6 with its word, when and by whom it was measured.
	await page.emulateMedia({ media: 'print' });
	await page.goto(`${setup}/sheet`);
	const mark = page.getByTestId('setup-sheet').getByTestId('gate-H6');
	await expect(mark).toHaveAttribute('data-status', 'stop');
	await expect(mark.locator('.gate-word')).toBeVisible();
	await expect(mark.locator('.gate-word')).toHaveText('STOP');
	await expect(mark).toContainText('by Omar Lindqvist');
	await expect(page.getByTestId('setup-sheet').getByTestId('gate-G54')).toHaveAttribute(
		'data-status',
		/stop|stale/
	);
	await expect(page.getByTestId('sheet-withheld')).toContainText('H6');
	await expect(page.getByTestId('sheet-signoff')).toContainText('Verified at the control by');
	await shot(page, 'safety-sheet-print');
});
