import { expect, test, type Page } from '@playwright/test';
import { parseLoadProgramWithComponents } from '../../src/lib/offsets/index';
import { DEMO_PASSWORD, FERNHILL, QUARRY, signedInClient } from './helpers';

/**
 * X/Y, radius and wear (issue 20) on a tablet (820×1180), as the demo people: an operator
 * records G54's X and Y from an edge each, a lead turns a measured pocket depth into T3's
 * length wear, and the pump housing setup's load program then carries X, Y, Z and the wear
 * line, which the read-back parser reads back to the same values.
 * Mill 1 (demo): ISO-style, inch, machine 1; its pump housing setup is setup 1 (T1–T5).
 */
const SHOP = `/shops/${FERNHILL.slug}`;
const PAGE = `${SHOP}/machines/1/components`;
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

test.use({ viewport: { width: 820, height: 1180 }, hasTouch: true });
test.describe.configure({ mode: 'serial' });

test('an operator records G54 X and Y from two edges with a 0.2 in edge finder', async ({
	page
}) => {
	await signIn(page, FERNHILL.operator);
	await page.goto(`${SHOP}/machines/1`);
	await page.getByTestId('components-link').click();
	await expect(page).toHaveURL(PAGE);
	const edge = page.locator('form', { hasText: 'Record an edge reading' });
	for (const [axis, reading, expected] of [
		['X', '-12.4000', '-12.3000 in'],
		['Y', '-7.2003', '-7.1003 in']
	] as const) {
		await edge.locator('select[name="register"]').selectOption('G54');
		await edge.locator('select[name="axis"]').selectOption(axis);
		await edge.getByLabel('Probe diameter').fill('0.2000');
		await edge.getByLabel('Machine coordinate at the edge').fill(reading);
		await edge.locator('select[name="firstSide"]').selectOption('minus');
		await page.getByRole('button', { name: 'Work it out' }).click();
		// Approached from the minus side: edge = reading + half the diameter (common shop practice).
		await expect(page.getByTestId('edge-preview')).toContainText(expected);
		await page.getByRole('button', { name: 'Save reading' }).click();
		await expect(page.getByTestId('saved')).toBeVisible();
		await expect(page.getByTestId(`${axis.toLowerCase()}-G54`)).toHaveText(expected);
	}
	await shot(page, 'components-xy');
});

test('a missing probe diameter is refused with the reason, and nothing is saved', async ({
	page
}) => {
	await signIn(page, FERNHILL.operator);
	await page.goto(PAGE);
	const before = await page.getByTestId('x-G55').textContent();
	const edge = page.locator('form', { hasText: 'Record an edge reading' });
	await edge.locator('select[name="register"]').selectOption('G55');
	await edge.getByLabel('Machine coordinate at the edge').fill('-3.0000');
	await page.getByRole('button', { name: 'Save reading' }).click();
	await expect(page.getByRole('alert').first()).toContainText('Probe diameter is required');
	await page.goto(PAGE);
	await expect(page.getByTestId('x-G55')).toHaveText(before!);
});

test('a lead enters a shallow pocket depth on T3 and accepts the proposed wear', async ({
	page
}) => {
	await signIn(page, FERNHILL.lead);
	await page.goto(PAGE);
	const wearBefore = Number(
		(await page.getByTestId('length-wear-3').textContent())!.replace(' in', '')
	);
	const form = page.locator('form', { hasText: 'Wear from a measured part' });
	await form.locator('select[name="h"]').selectOption('3');
	await form.locator('select[name="feature"]').selectOption('depth');
	await form.getByLabel('Nominal').fill('0.7500');
	await form.getByLabel('Measured').fill('0.7480');
	await form.getByRole('button', { name: 'Propose wear' }).click();
	const proposal = page.getByTestId('wear-proposal');
	// G43 adds the length (NIST RS274NGC v3 §3.5.11): too shallow → the tip must go lower → −.
	await expect(proposal).toContainText('the floor is 0.0020 in shallow');
	await expect(proposal).toContainText('length wear −0.0020 in');
	await shot(page, 'components-wear-proposal');
	await form.getByRole('button', { name: 'Accept and record' }).click();
	await expect(page.getByTestId('saved')).toBeVisible();
	const expected = (wearBefore - 0.002).toFixed(4);
	await expect(page.getByTestId('length-wear-3')).toHaveText(`${expected} in`);
	await expect(page.getByTestId('component-history')).toContainText('measured part: the floor is');
	// The register's own history page: every version with where it came from.
	await page.getByTestId('length-wear-3').getByRole('link').click();
	await expect(page).toHaveURL(/\/components\/tool\/3\/length-wear$/);
	await expect(page.getByTestId('current-value')).toHaveText(`${expected} in`);
	await expect(page.getByTestId('component-history-table').getByRole('row').nth(1)).toContainText(
		'Wear from a measured part'
	);
	await shot(page, 'component-history-h3-wear');
});

test('the setup load program carries X, Y, Z and the wear line, and reads back the same', async ({
	page
}) => {
	await signIn(page, FERNHILL.lead);
	await page.goto(PAGE);
	const wear = Number((await page.getByTestId('length-wear-3').textContent())!.replace(' in', ''));
	const res = await page.request.get(`${SHOP}/setups/1/load-program`);
	expect(res.status()).toBe(200);
	const text = await res.text();
	// ISO-style (SOURCES.md 3): G10 L2 P1 with X Y Z; G10 L11 = length wear.
	expect(text).toMatch(/^G10 L2 P1 X-12\.3000 Y-7\.1003 Z-?\d+\.\d{4}$/m);
	expect(text).toContain(`G10 L11 P3 R${wear.toFixed(4)}`);
	const back = parseLoadProgramWithComponents(text, {
		name: 'Mill 1',
		units: 'inch',
		zTravel: 20,
		convention: 'reference-touch',
		controlStyle: 'iso',
		extendedWorkOffsets: 48
	});
	expect(back.components.work.G54).toEqual({ x: -12.3, y: -7.1003 });
	expect(back.components.tools['3']).toEqual({ lengthWear: wear });
	expect(back.table.work.G54).toBeDefined();
});

test('the JSON API: same guard and gate (operator records edges, only leads set wear)', async () => {
	const api = `/api/v1${SHOP}/machines/1/components`;
	const operator = await signedInClient(FERNHILL.operator);
	const lead = await signedInClient(FERNHILL.lead);
	const outsider = await signedInClient(QUARRY.owner);
	const wear = { type: 'register', h: '3', component: 'length-wear', value: '-0.0200' };
	expect((await operator.post(api, { data: wear })).status()).toBe(403);
	expect((await outsider.post(api, { data: wear })).status()).toBe(404);
	// Beyond the limit (0.0100 in, shop policy): refused without the override, on its field.
	const refused = await lead.post(api, { data: wear });
	expect(refused.status()).toBe(400);
	expect((await refused.json()).issues[0].field).toBe('overrideReason');
	const proposal = await lead.post(api, {
		data: { type: 'part', h: '3', feature: 'depth', nominal: '0.5000', measured: '0.5010' }
	});
	expect(proposal.status()).toBe(200);
	// Too deep: the tool must stop higher → positive length wear (G43 adds, NISTIR 6556 §3.5.11).
	expect((await proposal.json()).proposal.change).toBe(0.001);
	const state = await (await operator.get(api)).json();
	expect(state.tools.find((t: { h: string }) => t.h === '3').lengthWear).toBeLessThan(0);
	// One register's record: any member of the shop, nobody else.
	const record = await (await operator.get(`${api}/tool/3/length-wear`)).json();
	expect(record.label).toBe('H3 length wear');
	expect(record.rows[0].value).toBe(state.tools.find((t: { h: string }) => t.h === '3').lengthWear);
	expect((await outsider.get(`${api}/tool/3/length-wear`)).status()).toBe(404);
	expect((await operator.get(`${api}/tool/3/z`)).status()).toBe(404);
	for (const c of [operator, lead, outsider]) await c.dispose();
});
