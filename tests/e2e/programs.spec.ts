import { readFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import knex from 'knex';
import { DEMO_PASSWORD, FERNHILL } from './helpers';

/** Kept as test artifacts, and looked at: `.data/test/screenshots/`. */
const SHOTS = resolve('.data/test/screenshots');
mkdirSync(SHOTS, { recursive: true });
const shot = (page: Page, name: string) =>
	page.screenshot({ path: join(SHOTS, `${name}.png`), fullPage: true });

async function signIn(page: Page, email: string) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops\/fernhill-precision$/);
}

async function openPumpHousingPrograms(page: Page) {
	await page
		.getByRole('navigation', { name: 'Shop' })
		.getByRole('link', { name: 'Setups' })
		.click();
	await page.getByRole('link', { name: 'Pump housing, ops A and B' }).click();
	await page.getByTestId('open-programs').click();
	await expect(page.getByRole('heading', { name: 'Program check', level: 1 })).toBeVisible();
}

/**
 * Mill 1 demo numbers (reference-touch, inch): G54 part top 2.8125 in above the reference, G55
 * 1.0630 in, tallest obstacle 3.125 in + 0.5 in margin → clearance height 3.625 in. Line 10
 * leaves the tip at 0.1 + 2.8125 = 2.9125 in, then line 11 rapids over to G55: low-traverse.
 * T2 is loaded at line 13 and moves in Z at line 15 without G43: no-length-comp; H1 is still
 * in force, so T2's real tip ends 0.4711 in above the reference, below G55's part top (1.0630
 * in), at rapid: rapid-into-part on the same line.
 */
const FAST = [
	'%',
	'O4472 (PUMP HOUSING - QUICK VERSION)',
	'G20 G17 G40 G80 G90',
	'T1 M6',
	'G54 G0 X-2. Y1.',
	'G43 H1 Z1.',
	'Z0.1',
	'G1 Z0. F40.',
	'X6. F60.',
	'G0 Z0.1',
	'G55 X-2. Y1.',
	'G0 Z3.',
	'T2 M6',
	'G0 X1. Y1.',
	'Z0.5',
	'G1 Z-0.25 F20.',
	'G0 Z3.',
	'G91 G28 Z0.',
	'M30',
	'%'
];
/** The same with the retract at line 10 above the clearance height and G43 H2 for T2. */
const FIXED = FAST.map((l, i) => (i === 9 ? 'G0 Z1.' : i === 14 ? 'G43 H2 Z0.5' : l));
const body = (lines: string[]) => lines.join('\n') + '\n';

test('an operator uploads a program to the Mill 1 setup, follows a finding to its line, downloads the report, fixes it', async ({
	page
}) => {
	await signIn(page, FERNHILL.operator);
	await openPumpHousingPrograms(page);
	await page.getByLabel('Program file').setInputFiles({
		name: 'O4472.nc',
		mimeType: 'text/plain',
		buffer: Buffer.from(body(FAST))
	});
	// A name of its own per run, so the program starts at version 1 on a reused database too.
	const name = `O4472 quick faces ${Date.now().toString(36)}`;
	await page.getByLabel('Name (optional)').fill(name);
	await page.getByTestId('upload-program').click();

	await expect(page.getByTestId('program-name')).toHaveText(name);
	const findings = page.getByTestId('finding');
	await expect(findings).toHaveCount(3);
	await expect(
		page.locator('[data-testid="finding"][data-kind="rapid-into-part"]').getByTestId('finding-line')
	).toHaveText('Line 15 →');
	const low = page.locator('[data-testid="finding"][data-kind="low-traverse"]');
	const noComp = page.locator('[data-testid="finding"][data-kind="no-length-comp"]');
	await expect(low).toContainText('Stop');
	await expect(low).toContainText('G55 X-2. Y1.');
	await expect(low.getByTestId('finding-line')).toHaveText('Line 11 →');
	await expect(noComp).toContainText('G43');
	await expect(noComp.getByTestId('finding-line')).toHaveText('Line 15 →');
	// Summary: units, offsets and freshness, tip Z range, clearance planes.
	await expect(page.getByTestId('program-units')).toHaveText('inch');
	await expect(page.getByTestId('plane-G54')).toHaveText('Z 0.8125 in');
	await expect(page.getByTestId('plane-G55')).toHaveText('Z 2.5620 in');
	await expect(page.getByTestId('work-offsets').locator('tr[data-register="G54"]')).toContainText(
		'2.8125 in'
	);
	await expect(page.getByTestId('work-offsets').locator('tr[data-register="G54"]')).toContainText(
		'OK'
	);
	// T1's lowest tip: G54 Z0 → 2.8125 in above the reference.
	await expect(page.getByTestId('tip-min-1')).toHaveText('2.8125 in');
	await expect(page.getByTestId('cautions')).toBeVisible();
	await shot(page, 'program-check-findings');

	// The report: setup, machine, program version and SHA-256, findings, cautions.
	const [download] = await Promise.all([
		page.waitForEvent('download'),
		page.getByTestId('download-report').click()
	]);
	expect(download.suggestedFilename()).toBe(
		`program-check-${name.toLowerCase().replace(/ /g, '-')}-v1.md`
	);
	const report = readFileSync(await download.path(), 'utf8');
	const sha = createHash('sha256').update(body(FAST)).digest('hex');
	expect(report).toContain(sha);
	expect(report).toContain('Pump housing, ops A and B');
	expect(report).toContain('Mill 1');
	expect(report).toMatch(/\*\*STOP\*\* · Rapid move below the clearance plane · line 11/);
	expect(report).toMatch(/\*\*STOP\*\* · Z move without tool length compensation · line 15/);
	expect(report).not.toContain('no-length-comp');
	expect(report).toContain('Run the first part single block');
	await expect(page.getByTestId('sha256')).toHaveText(sha);

	// Follow the low rapid to its line.
	await low.getByTestId('finding-line').click();
	await expect(page).toHaveURL(/\/text\?version=1&line=11#L11$/);
	const line = page.locator('#L11');
	await expect(line).toHaveAttribute('aria-current', 'location');
	await expect(line).toContainText('G55 X-2. Y1.');
	await expect(line).toContainText('Stop');
	await expect(line).toBeInViewport();
	await shot(page, 'program-text-line-11');

	// Fix both and upload the new version from the program's page: clean.
	await page.getByRole('link', { name: 'Back to the findings' }).click();
	await page.getByLabel(`New version of ${name}`).setInputFiles({
		name: 'O4472.nc',
		mimeType: 'text/plain',
		buffer: Buffer.from(body(FIXED))
	});
	await page.getByTestId('upload-program').click();
	await expect(page).toHaveURL(/\?version=2$/);
	await expect(page.getByTestId('no-findings')).toBeVisible();
	await expect(page.getByRole('navigation', { name: 'Versions' })).toContainText('v1');
	await shot(page, 'program-check-clean-v2');
});

test('a file that is not program text is refused with its name and why', async ({ page }) => {
	await signIn(page, FERNHILL.operator);
	await openPumpHousingPrograms(page);
	// The browser refuses a wrong ending at once…
	await page.getByLabel('Program file').setInputFiles({
		name: 'fixture-plate.pdf',
		mimeType: 'application/pdf',
		buffer: Buffer.from('%PDF-1.7\n')
	});
	await expect(page.getByRole('alert')).toContainText('"fixture-plate.pdf" is not a program file');
	// …the server checks the content: a ZIP renamed to .nc.
	await page.getByLabel('Program file').setInputFiles({
		name: 'O5000.nc',
		mimeType: 'text/plain',
		buffer: Buffer.from([0x50, 0x4b, 3, 4, 0, 0, 0, 0])
	});
	await page.getByTestId('upload-program').click();
	await expect(page.getByTestId('upload-result')).toContainText(
		'"O5000.nc" is a ZIP archive or Office document'
	);
	await expect(page.getByTestId('programs')).not.toContainText('O5000');
	await shot(page, 'program-upload-refused');
});

test('a large program is checked outside the request, with progress; without a worker it can be checked here', async ({
	page
}) => {
	// 60,000 lines: over the 50,000-line inline limit.
	const lines = [
		'%',
		'O9000 (LONG)',
		'G20 G90',
		'T1 M6',
		'G54 G0 X0. Y0.',
		'G43 H1 Z1.',
		'G1 Z0. F40.'
	];
	for (let i = 0; lines.length < 59_996; i++) lines.push(`X${(i % 50) / 10} Y${(i % 7) / 10}`);
	lines.push('G0 Z1.', 'G91 G28 Z0.', 'M30', '%');
	await signIn(page, FERNHILL.operator);
	await openPumpHousingPrograms(page);
	await page.getByLabel('Program file').setInputFiles({
		name: 'O9000.nc',
		mimeType: 'text/plain',
		buffer: Buffer.from(body(lines))
	});
	await page.getByTestId('upload-program').click();
	await expect(page.getByTestId('program-name')).toHaveText('O9000');
	// Either a worker already took it, or it waits in the queue with a way through.
	const progress = page.getByTestId('check-progress');
	if (await progress.isVisible()) {
		await expect(progress).toContainText('60,000 lines');
		await shot(page, 'program-check-queued');
		const runNow = page.getByTestId('run-now');
		if (await runNow.isVisible()) await runNow.click();
	}
	await expect(page.getByTestId('no-findings')).toBeVisible({ timeout: 20_000 });
	await expect(page.getByTestId('summary')).toContainText('60,000');
	await shot(page, 'program-check-large-done');
});

test('without a worker, a queued check says so, shows its progress and can be checked here', async ({
	page
}) => {
	// A queued check that was never put on the queue: what the page shows when no worker runs
	// (or Redis was out of reach at upload). Uses the large program from the test above.
	const url = process.env.DATABASE_URL ?? '';
	if (!/_test$/.test(new URL(url).pathname)) throw new Error('needs the *_test database');
	const sql = knex({ client: 'pg', connection: url, pool: { min: 0, max: 1 } });
	const shop = await sql('shops').where({ slug: FERNHILL.slug }).first('schema_name');
	const t = (name: string) => `${shop.schema_name}.${name}`;
	const program = await sql(t('programs')).where({ name: 'O9000' }).first('id', 'setup_id');
	const version = await sql(t('program_versions'))
		.where({ program_id: program.id })
		.orderBy('version', 'desc')
		.first('id', 'version');
	const done = await sql(t('program_checks')).where({ version_id: version.id }).first('input');
	await sql(t('program_checks')).insert({
		version_id: version.id,
		mode: 'background',
		status: 'queued',
		input: JSON.stringify(done.input),
		note: 'The job queue could not be reached, so the background worker has not been told about this check. Check it here instead.'
	});
	await sql.destroy();

	await signIn(page, FERNHILL.operator);
	await page.goto(
		`/shops/${FERNHILL.slug}/setups/${program.setup_id}/programs/${program.id}?version=${version.version}`
	);
	const progress = page.getByTestId('check-progress');
	await expect(progress).toContainText('Queued — the background worker will pick it up');
	await expect(progress).toContainText('job queue could not be reached');
	await expect(page.getByTestId('progress-text')).toHaveText('0% · 0 of 60,000 lines');
	await expect(page.getByTestId('download-report')).toHaveCount(0);
	await shot(page, 'program-check-queued');
	await page.getByTestId('run-now').click();
	await expect(page.getByTestId('no-findings')).toBeVisible({ timeout: 20_000 });
	await expect(page.getByTestId('check-progress')).toHaveCount(0);
	await shot(page, 'program-check-checked-here');
});
