import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL } from './helpers';

const shots = '.data/test/screenshots';

async function signIn(page: Page, email: string) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops\/fernhill-precision$/);
}

test('a lead converts Mill 2 from reference-touch to gauge-length and every spindle Z at program zero stays the same', async ({
	page
}) => {
	await signIn(page, FERNHILL.lead);
	await page.getByRole('link', { name: 'Mill 2' }).click();
	await page.getByRole('link', { name: 'Convert convention' }).click();
	await page.getByLabel('Convert to').selectOption('gauge-length');
	// Without R the engine cannot do it, and says which number is missing.
	await page.getByRole('button', { name: 'Show the converted table' }).click();
	await expect(page.getByText(/referenceGaugeLineZ/)).toBeVisible();

	await page.getByLabel('Gauge-line Z on the reference (in)').fill('-17.2500');
	await page.getByRole('button', { name: 'Show the converted table' }).click();
	const pairs = page.getByTestId('pair-table');
	await expect(pairs).toBeVisible();
	// Mill 2 has G54 and two tools: two pairs, each the same before and after.
	const rows = pairs.locator('tbody tr');
	await expect(rows).toHaveCount(2);
	for (let i = 0; i < 2; i++) {
		const cells = rows.nth(i).locator('td');
		await expect(cells.nth(1)).toHaveText(await cells.nth(2).innerText());
	}
	// NIST RS274NGC v3 composition: spindle Z at program zero = W + H. G54 1.8250 + H1 -14.2733 = -12.4483 in.
	await expect(pairs).toContainText('G54 + H1');
	await expect(rows.first().locator('td').nth(1)).toHaveText('-12.4483 in');
	// Gauge length: H1 = reading − R = -14.2733 − (-17.2500) = 2.9767 in (DESIGN.md §2 table).
	await expect(page.getByTestId('conversion-preview')).toContainText('2.9767 in');
	await page.screenshot({ path: `${shots}/convert-mill2-preview.png`, fullPage: true });
	await page.getByRole('button', { name: 'Convert and record' }).click();
	await expect(page).toHaveURL(/\/machines\/2\?converted=1$/);
	await expect(page.getByText('Gauge length (tool measured from the gauge line)')).toBeVisible();
	await expect(page.getByTestId('tools-table')).toContainText('2.9767 in');
	// The R typed for the conversion is now part of the reference record.
	await expect(page.getByTestId('reference')).toContainText('-17.2500 in');

	// And back: the same numbers as before, exactly (and Mill 2 is as the other tests expect it).
	await page.getByRole('link', { name: 'Convert convention' }).click();
	await page.getByLabel('Convert to').selectOption('reference-touch');
	await page.getByRole('button', { name: 'Show the converted table' }).click();
	await expect(page.getByTestId('conversion-preview')).toContainText('All 2 unchanged');
	await page.getByRole('button', { name: 'Convert and record' }).click();
	await expect(page.getByTestId('tools-table')).toContainText('-14.2733 in');
	await expect(page.getByTestId('fixtures-table')).toContainText('1.8250 in');
	// Converting measured nothing: what was stale against the re-established reference still is.
	await expect(page.getByTestId('fixtures-table')).toContainText('Stale');
});

test('a CSV with one bad row (on idle Mill 4) shows that row, column and value, and imports only on an explicit choice', async ({
	page
}) => {
	await signIn(page, FERNHILL.lead);
	await page.goto('/shops/fernhill-precision/machines/4/tools');
	const csv = [
		't,h,description,holder,stickout',
		'21,21,5/8 in end mill,CAT40 shrink fit,1.5',
		'22,H22,center drill,,',
		'23,23,chamfer mill,,0.75'
	].join('\n');
	await page
		.getByLabel('CSV file', { exact: true })
		.setInputFiles({ name: 'rack.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
	await page.getByRole('button', { name: 'Check the file' }).click();
	const preview = page.getByTestId('import-preview');
	await expect(preview).toContainText('2 row(s) ready, 1 with errors.');
	await expect(preview).toContainText(
		'Row 3, column h ("H22"): H number must be a whole number; "H22" is not a whole number'
	);
	await page.screenshot({ path: `${shots}/csv-preview.png`, fullPage: true });
	// "Import nothing" leaves the rack as it was.
	await page.getByRole('link', { name: 'Import nothing' }).click();
	await expect(page.getByTestId('rack-table')).not.toContainText('5/8 in end mill');

	await page
		.getByLabel('CSV file', { exact: true })
		.setInputFiles({ name: 'rack.csv', mimeType: 'text/csv', buffer: Buffer.from(csv) });
	await page.getByRole('button', { name: 'Check the file' }).click();
	await page.getByRole('button', { name: 'Import the 2 valid row(s), skip 1' }).click();
	await expect(page.getByRole('status')).toContainText('Imported 2 tool(s).');
	await expect(page.getByTestId('rack-table')).toContainText('5/8 in end mill');
	await expect(page.getByTestId('rack-table')).toContainText('chamfer mill');
	await expect(page.getByTestId('rack-table')).not.toContainText('center drill');
});

test('a CSV missing a required column is refused with the column named', async ({ page }) => {
	await signIn(page, FERNHILL.lead);
	await page.goto('/shops/fernhill-precision/machines/4/tools');
	await page.getByLabel('CSV file', { exact: true }).setInputFiles({
		name: 'x.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from('tool,length\n1,2\n')
	});
	await page.getByRole('button', { name: 'Check the file' }).click();
	await expect(page.getByRole('alert')).toContainText('Missing columns: t, h, description.');
});

test('a lead adds a machine; bad input names the field and saves nothing', async ({ page }) => {
	await signIn(page, FERNHILL.lead);
	await page.getByRole('link', { name: 'Add a machine' }).click();
	await page.getByLabel('Name').fill('Mill 1');
	await page.getByLabel('Z travel (in)').fill('twenty');
	await page.getByRole('button', { name: 'Add the machine' }).click();
	await expect(page.getByText('Z travel must be a number; "twenty" is not a number')).toBeVisible();
	// A decimal comma is refused with the reason, never read as 20 (it was, before).
	await page.getByLabel('Z travel (in)').fill('20,5');
	await page.getByRole('button', { name: 'Add the machine' }).click();
	await expect(page.getByText('"20,5" has a comma: use a point for decimals')).toBeVisible();
	await page.getByLabel('Z travel (in)').fill('508');
	await page.getByRole('button', { name: 'Add the machine' }).click();
	await expect(page.getByText(/Z travel 508 in is implausible/)).toBeVisible();
	await page.getByLabel('Z travel (in)').fill('20');
	await page.getByRole('button', { name: 'Add the machine' }).click();
	await expect(
		page.getByText('A machine named "Mill 1" already exists in this shop.')
	).toBeVisible();
	const name = `Mill 5-${Date.now().toString(36)}`;
	await page.getByLabel('Name').fill(name);
	await page.getByRole('button', { name: 'Add the machine' }).click();
	// Fernhill's plan allows more than its 4 mills: the new one is added with its reference.
	await expect(page.getByRole('heading', { name })).toBeVisible();
	await expect(page.getByTestId('reference')).toContainText('1-2-3 block, 3.0000 in tall');
	await page.screenshot({ path: `${shots}/add-machine-result.png`, fullPage: true });
});

test('an operator reads machines and tools but is offered no editing', async ({ page }) => {
	await signIn(page, FERNHILL.operator);
	await expect(page.getByRole('link', { name: 'Add a machine' })).toHaveCount(0);
	await page.getByRole('link', { name: 'Mill 1' }).click();
	await expect(page.getByRole('link', { name: 'Edit machine' })).toHaveCount(0);
	await expect(page.getByRole('link', { name: 'Convert convention' })).toHaveCount(0);
	await page.getByRole('link', { name: 'Tools' }).click();
	await expect(page.getByTestId('rack-table')).toContainText('3.0 in face mill');
	await expect(page.getByRole('button', { name: 'Add tool' })).toHaveCount(0);
	const res = await page.goto('/shops/fernhill-precision/machines/1/edit');
	expect(res?.status()).toBe(403);
});

test('a lead adds a photo to Mill 3; a file that is not an image is refused by name', async ({
	page
}) => {
	await signIn(page, FERNHILL.lead);
	await page.goto('/shops/fernhill-precision/machines/3/edit');
	await page.getByLabel('Photo file').setInputFiles({
		name: 'notes.png',
		mimeType: 'image/png',
		buffer: Buffer.from('not really a picture')
	});
	await page.getByRole('button', { name: 'Upload photo' }).click();
	await expect(page.getByRole('alert')).toContainText('"notes.png" is');
	await expect(page.getByRole('alert')).toContainText('JPEG, PNG or WebP');
	const png = Buffer.from(
		'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==',
		'base64'
	);
	await page
		.getByLabel('Photo file')
		.setInputFiles({ name: 'mill-3.png', mimeType: 'image/png', buffer: png });
	await page.getByRole('button', { name: 'Upload photo' }).click();
	await expect(page).toHaveURL(/\/machines\/3\?photo=1$/);
	const img = page.getByTestId('machine-photo');
	await expect(img).toBeVisible();
	const res = await page.request.get('/shops/fernhill-precision/machines/3/photo');
	expect(res.headers()['content-type']).toBe('image/png');
	expect(Buffer.from(await res.body()).equals(png)).toBe(true);
});
