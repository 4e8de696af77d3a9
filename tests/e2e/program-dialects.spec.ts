import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD, FERNHILL } from './helpers';

/** Kept as test artifacts, and looked at: `.data/test/screenshots/`. */
const SHOTS = resolve('.data/test/screenshots');
mkdirSync(SHOTS, { recursive: true });
const shot = (page: Page, name: string) =>
	page.screenshot({ path: join(SHOTS, `${name}.png`), fullPage: true });

/**
 * A posted-style program for Mill 1 (an ISO-style control in the demo): %, O number, N words,
 * the usual safe-start block with G0 and G80 together, and one planted low move between
 * fixtures. Mill 1 demo numbers (reference-touch, inch): G54 part top 2.8125 in, clearance
 * height 3.625 in above the reference. Line 11 leaves the tip at 0.1 + 2.8125 = 2.9125 in;
 * line 12 rapids over to G55 from there: the one stop (common shop practice: lift clear in Z
 * before moving between fixtures).
 */
const POSTED = [
	'%', // 1
	'O4480 (PUMP HOUSING OPS A B - POSTED)', // 2
	'(T1 - 0.5 FLAT END MILL)', // 3
	'N10 G0 G17 G40 G49 G80 G90 G20', // 4 safe-start: fine on an ISO-style control
	'N20 T1 M6', // 5
	'N30 G0 G90 G54 X-2. Y1. S6000 M3', // 6
	'N40 G43 H1 Z1. M8', // 7
	'N50 Z0.1', // 8
	'N60 G1 Z0. F40.', // 9
	'N70 X6. F60.', // 10
	'N80 G0 Z0.1', // 11
	'N90 G55 X-2. Y1.', // 12 the planted low move
	'N100 G1 Z0. F40.', // 13
	'N110 G0 Z3.', // 14
	'N120 M9', // 15
	'N130 G91 G28 Z0.', // 16
	'N140 G90', // 17
	'N150 M30', // 18
	'%' // 19
];

test('a posted program with a safe-start block and one low move between fixtures gives exactly one stop, on its line; re-checked as RS274NGC-style the safe-start block is refused too', async ({
	page
}) => {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(FERNHILL.operator);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops\/fernhill-precision$/);
	await page
		.getByRole('navigation', { name: 'Shop' })
		.getByRole('link', { name: 'Setups' })
		.click();
	await page.getByRole('link', { name: 'Pump housing, ops A and B' }).click();
	await page.getByTestId('open-programs').click();

	await page.getByLabel('Program file').setInputFiles({
		name: 'O4480.nc',
		mimeType: 'text/plain',
		buffer: Buffer.from(POSTED.join('\n') + '\n')
	});
	await page.getByLabel('Name (optional)').fill(`O4480 posted ${Date.now().toString(36)}`);
	await page.getByTestId('upload-program').click();

	// Exactly one finding: the stop on line 12. No false stop on the safe-start block.
	const findings = page.getByTestId('finding');
	await expect(findings).toHaveCount(1);
	await expect(findings.first()).toHaveAttribute('data-kind', 'low-traverse');
	await expect(findings.first()).toContainText('Stop');
	await expect(findings.first().getByTestId('finding-line')).toHaveText('Line 12 →');
	await expect(page.getByTestId('dialect-line')).toContainText(
		'Checked as ISO-style, from the machine’s settings.'
	);

	// The picture: one stop marked; clicking it opens line 12.
	const picture = page.getByTestId('height-profile');
	await expect(picture).toBeVisible();
	await expect(
		picture.locator('[data-testid="profile-finding"][data-severity="stop"]')
	).toHaveCount(1);
	// The one tool change (line 5) is marked on its own (thinning only merges crowded marks).
	await expect(picture.getByTestId('profile-tool-change')).toHaveCount(1);
	await expect(picture.getByTestId('profile-tool-change').locator('title')).toHaveText(
		'Tool change at line 5'
	);
	await shot(page, 'program-dialect-iso');
	await picture.locator('[data-testid="profile-finding"]').first().click();
	await expect(page).toHaveURL(/\/text\?version=1&line=12#L12$/);
	await expect(page.locator('#L12')).toContainText('N90 G55 X-2. Y1.');
	await page.getByRole('link', { name: 'Back to the findings' }).click();

	// Re-checked as RS274NGC-style: G0 and G80 share modal group 1 there, so line 4 stops too.
	await page.getByTestId('recheck').click();
	await expect(page.getByTestId('dialect')).toHaveText('RS274NGC-style');
	await expect(page.getByTestId('dialect-line')).toContainText('chosen for this check');
	await expect(findings).toHaveCount(2);
	await expect(
		page.locator('[data-testid="finding"][data-kind="parse-error"]').getByTestId('finding-line')
	).toHaveText('Line 4 →');
	await expect(
		page.locator('[data-testid="finding"][data-kind="low-traverse"]').getByTestId('finding-line')
	).toHaveText('Line 12 →');
	await shot(page, 'program-dialect-rs274ngc');
});
