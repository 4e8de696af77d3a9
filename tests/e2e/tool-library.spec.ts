import { expect, test, type Browser, type Page } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL, signedInClient } from './helpers';

/**
 * Tools measured off the machine (issue 20), on a tablet: a lead maps the presetter's CSV once,
 * sees a bad row refused with its column and value (nothing imported), imports the corrected
 * file (decimal comma, mm), and puts a new assembly in a Mill 1 pocket; the H recorded is the
 * presetter length worked out for Mill 1's convention.
 */
const shots = '.data/test/screenshots';
const TABLET = { width: 820, height: 1180 };
const SHOP = `/shops/${FERNHILL.slug}`;

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

test('a lead imports a presetter CSV (decimal comma, mm) and puts an assembly in a Mill 1 pocket', async ({
	browser
}) => {
	test.setTimeout(90_000);
	const page = await signedIn(browser, FERNHILL.lead);
	await page.getByRole('link', { name: 'Tool library' }).click();
	// The demo's presetter-measured assemblies, shared by Mill 1 and Mill 4: one place at a time.
	await expect(page.getByTestId('library-table')).toContainText('FH-101');
	await expect(page.getByTestId('library-table')).toContainText('4.2875 in');
	const fh101 = page.getByTestId('library-table').getByRole('row').filter({ hasText: 'FH-101' });
	await expect(fh101).toContainText('Mill 1 T11');
	await expect(fh101).not.toContainText('Mill 4');
	await fh101.getByRole('link', { name: 'FH-101' }).click();
	await expect(page.getByTestId('assembly-now')).toContainText('Now: Mill 1 T11');
	const was = page.getByTestId('assignments-table').getByRole('row').filter({ hasText: 'Mill 4' });
	await expect(was).toContainText('moved to another pocket');
	await page.getByRole('link', { name: 'Tool library' }).first().click();

	await page.getByRole('link', { name: 'Import from a presetter' }).click();
	await page.getByLabel('Assembly name column').fill('Tool');
	await page.getByLabel('Gauge length column').fill('L');
	await page.getByLabel('Radius column').fill('');
	await page.getByLabel('Diameter column').fill('D');
	await page.getByLabel('Cutter column').fill('Description');
	await page.getByLabel('Measured at column').fill('Date');
	await page.getByLabel('Units').selectOption('mm');
	await page.getByLabel('Decimal separator').selectOption('comma');
	await page.getByLabel('Column separator').selectOption('semicolon');
	await page.getByRole('button', { name: 'Save the mapping' }).click();
	await expect(page.getByRole('status')).toContainText('Mapping saved');

	const a = `E2E-${Date.now().toString(36).toUpperCase()}`;
	const file = (lengthB: string) => ({
		name: 'presetter.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from(
			[
				'Tool;Description;L;D;Date',
				`${a}-A;12 mm end mill;104,775;12;2026-12-01 07:30`,
				`${a}-B;6 mm drill;${lengthB};6;2026-12-01 07:32`
			].join('\n')
		)
	});
	// One row with a point where the mapping says decimal comma: shown, and nothing imported.
	await page.getByLabel('Presetter CSV file').setInputFiles(file('98.5'));
	await page.getByRole('button', { name: 'Check the file' }).click();
	const preview = page.getByTestId('presetter-preview');
	await expect(preview).toContainText('1 of 2 row(s) with errors');
	await expect(preview).toContainText('Row 3, column L ("98.5"): Gauge length "98.5" has a point');
	await expect(preview.getByRole('button', { name: /Import/ })).toHaveCount(0);
	await page.screenshot({ path: `${shots}/presetter-preview-error.png`, fullPage: true });

	await page.getByLabel('Presetter CSV file').setInputFiles(file('98,5'));
	await page.getByRole('button', { name: 'Check the file' }).click();
	await expect(preview).toContainText('All 2 row(s) ready');
	// 104,775 mm read with the decimal comma.
	await expect(preview).toContainText('104.775 mm');
	await preview.getByRole('button', { name: 'Import all 2 row(s)' }).click();
	await expect(page.getByRole('status')).toContainText(
		'Imported 2 measurement(s), 2 of them new assemblies'
	);

	await page.getByRole('link', { name: `${a}-A` }).click();
	await expect(page.getByTestId('assembly-length')).toContainText('104.775 mm');
	await page
		.getByLabel('Machine', { exact: true })
		.selectOption({ label: 'Mill 1 (reference touch, inch)' });
	await page.getByLabel('T number (pocket)').fill('8');
	await page.getByRole('button', { name: 'Work out the H' }).click();
	// DESIGN.md §2 reference-touch: H = R + L = -19.9650 + 104.775 mm / 25.4 (4.1250 in) = -15.8400 in.
	await expect(page.getByTestId('preview-value')).toHaveText('-15.8400 in');
	await expect(page.getByTestId('preview')).toContainText(
		'R -19.9650 in + L 104.775 mm = 4.1250 in'
	);
	await expect(page.getByTestId('cautions')).toBeVisible();
	await page.screenshot({ path: `${shots}/presetter-assign-preview.png`, fullPage: true });
	await page.getByRole('button', { name: 'Record H8 on Mill 1' }).click();
	await expect(page).toHaveURL(/\/machines\/1\/history\/tool\/8\?saved=\d+$/);
	await expect(page.getByRole('table')).toContainText('From the presetter');
	await expect(page.getByRole('table')).toContainText('-15.8400 in');
	// Mill 1's rack says which tools came from the library, with a link to the assembly.
	await page.goto(`${SHOP}/machines/1/tools`);
	const t8 = page
		.getByTestId('rack-table')
		.getByRole('row')
		.filter({ hasText: `${a}-A` });
	await expect(t8.getByTestId('from-library')).toHaveText(`From the library: ${a}-A`);

	// The JSON API shows the same: Mill 1's current H8 is the presetter value.
	const api = await signedInClient(FERNHILL.operator);
	const offsets = await (await api.get(`/api/v1${SHOP}/machines/1/offsets`)).json();
	expect(JSON.stringify(offsets)).toContain('-15.84');
	// An operator may read the library but not assign (403), whatever the body.
	const lib = await (await api.get(`/api/v1${SHOP}/tool-library`)).json();
	const id = lib.assemblies.find((x: { name: string }) => x.name === `${a}-A`).id;
	const refused = await api.post(`/api/v1${SHOP}/tool-library/${id}/assignments`, {
		data: { machineId: 1, t: 9 }
	});
	expect(refused.status()).toBe(403);
	await api.dispose();
	await page.context().close();
});
