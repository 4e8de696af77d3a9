import AxeBuilder from '@axe-core/playwright';
import { expect, test, type Page } from '@playwright/test';
import jsQR from 'jsqr';
import { PNG } from 'pngjs';
import { randomUUID } from 'node:crypto';
import { baseURL, DEMO_PASSWORD, FERNHILL, signedInClient } from './helpers';

/**
 * At the machine: every page an operator uses fits a phone (390×844) and a tablet
 * (820×1180) without sideways scrolling, with its primary action on screen and no serious or
 * critical axe-core findings; Mill 1's label sheet prints and its QR codes decode to the right
 * URLs (which open after sign-in); machine mode shows the setup on the table and updates itself.
 */
const SHOP = `/shops/${FERNHILL.slug}`;
const MILL1 = `${SHOP}/machines/1`;
const shot = (page: Page, name: string) =>
	page.screenshot({ path: `.data/test/screenshots/${name}.png`, fullPage: true });

async function signIn(page: Page, email: string = FERNHILL.operator) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops/);
}

/** Operator pages, each with the primary action that must be on screen (role + name). */
const PAGES: { path: string; name: string; primary?: [string, RegExp | string] }[] = [
	{ path: SHOP, name: 'machines', primary: ['link', 'Mill 1'] },
	{ path: `${SHOP}/fleet`, name: 'fleet' },
	{ path: `${SHOP}/findings`, name: 'findings' },
	{ path: `${SHOP}/setups`, name: 'setups', primary: ['link', /Pump housing/] },
	{ path: `${SHOP}/setups/1`, name: 'setup' },
	{ path: MILL1, name: 'machine', primary: ['link', 'Touch off'] },
	{ path: `${MILL1}/tools`, name: 'tools' },
	{ path: `${MILL1}/fixtures`, name: 'fixtures' },
	{ path: `${MILL1}/readings/tool/2`, name: 'touch-off', primary: ['button', 'Work out offset'] },
	{
		path: `${MILL1}/readings/part-top/1`,
		name: 'part-top',
		primary: ['button', 'Work out offset']
	},
	{ path: `${MILL1}/history/tool/2`, name: 'history-h2', primary: ['link', 'Correct'] },
	{ path: `${MILL1}/history/work/G54`, name: 'history-g54', primary: ['link', 'Correct'] },
	{ path: `${MILL1}/machine-mode`, name: 'machine-mode', primary: ['link', 'Touch off T1'] },
	{ path: `${MILL1}/labels`, name: 'labels', primary: ['button', 'Print'] },
	{ path: `${MILL1}/components`, name: 'components', primary: ['button', 'Work it out'] },
	{ path: `${MILL1}/components/tool/3/length-wear`, name: 'component-history-h3-wear' },
	{ path: `${MILL1}/components/work/G54/x`, name: 'component-history-g54-x' }
];

for (const vp of [
	{ width: 390, height: 844, label: 'phone' },
	{ width: 820, height: 1180, label: 'tablet' }
]) {
	test.describe(`${vp.label} ${vp.width}×${vp.height}`, () => {
		test.use({ viewport: { width: vp.width, height: vp.height } });

		test('no operator page scrolls sideways; primary actions on screen; no serious axe findings', async ({
			page
		}) => {
			test.setTimeout(180_000);
			await signIn(page);
			const problems: string[] = [];
			for (const p of PAGES) {
				await page.goto(p.path);
				await page.waitForLoadState('networkidle');
				const w = await page.evaluate(() => ({
					scroll: document.documentElement.scrollWidth,
					client: document.documentElement.clientWidth,
					// Tables of operator lists must fit too (their own scroll box would hide columns).
					tables: [...document.querySelectorAll('table.rtable, table.rtable-lg')].map(
						(t) => t.getBoundingClientRect().right
					)
				}));
				if (w.scroll > w.client)
					problems.push(`${p.name}: page ${w.scroll} px wide in ${w.client}`);
				for (const right of w.tables)
					if (right > w.client + 1) problems.push(`${p.name}: a table reaches ${right} px`);
				if (p.primary) {
					const [role, name] = p.primary;
					const action = page
						.getByRole(role as 'link' | 'button', { name, exact: typeof name === 'string' })
						.first();
					await expect(action, `${p.name}: ${name}`).toBeVisible();
					const box = (await action.boundingBox())!;
					if (box.x < 0 || box.x + box.width > w.client)
						problems.push(`${p.name}: "${name}" is off screen (x ${box.x}–${box.x + box.width})`);
					if (box.height < 44 || box.width < 44)
						problems.push(`${p.name}: "${name}" is ${box.width}×${box.height}, under 44×44`);
				}
				const axe = await new AxeBuilder({ page }).analyze();
				for (const v of axe.violations.filter((v) =>
					['serious', 'critical'].includes(v.impact ?? '')
				))
					problems.push(
						`${p.name}: axe ${v.id} (${v.impact}) at ${v.nodes
							.map((n) => n.target.join(' '))
							.slice(0, 3)
							.join(', ')}`
					);
				await shot(page, `${vp.label}-${p.name}`);
			}
			expect(problems).toEqual([]);
		});
	});
}

test("the owner's pages fit a phone too (members, settings, billing, audit log, tool library)", async ({
	page
}) => {
	test.setTimeout(120_000);
	await page.setViewportSize({ width: 390, height: 844 });
	await signIn(page, FERNHILL.owner);
	const wide: string[] = [];
	for (const path of ['members', 'settings', 'billing', 'audit', 'tool-library']) {
		await page.goto(`${SHOP}/${path}`);
		await page.waitForLoadState('networkidle');
		const w = await page.evaluate(() => [
			document.documentElement.scrollWidth,
			document.documentElement.clientWidth
		]);
		if (w[0] > w[1]) wide.push(`${path}: page ${w[0]} px wide in ${w[1]}`);
	}
	expect(wide).toEqual([]);
});

test('machine length fields open the decimal keypad, with a ± key beside machine Z', async ({
	page
}) => {
	await signIn(page);
	await page.goto(`${MILL1}/readings/tool/2`);
	const z = page.getByRole('textbox', { name: /^Machine Z/ });
	await expect(z).toHaveAttribute('inputmode', 'decimal');
	await z.fill('14.7502');
	await page.getByRole('button', { name: 'Change the sign of Machine Z' }).click();
	await expect(z).toHaveValue('-14.7502');
	const size = await page
		.getByRole('button', { name: 'Change the sign of Machine Z' })
		.boundingBox();
	expect(size!.width).toBeGreaterThanOrEqual(44);
	expect(size!.height).toBeGreaterThanOrEqual(44);
});

/** Decodes the QR code in a PNG screenshot. */
function decode(png: Buffer): string | null {
	const img = PNG.sync.read(png);
	return jsQR(new Uint8ClampedArray(img.data), img.width, img.height)?.data ?? null;
}

test("Mill 1's label sheet prints, and every QR code decodes to its item's touch-off URL", async ({
	page
}) => {
	await signIn(page);
	const api = await signedInClient(FERNHILL.operator);
	const offsets = await (await api.get(`/api/v1${MILL1}/offsets`)).json();
	await api.dispose();
	const expected = [
		`${baseURL}${MILL1}/machine-mode`,
		...offsets.fixtures.map((f: { id: number }) => `${baseURL}${MILL1}/readings/part-top/${f.id}`),
		...offsets.tools.map((t: { id: number }) => `${baseURL}${MILL1}/readings/tool/${t.id}`)
	].sort();

	for (const size of ['a4', 'letter', 'label']) {
		await page.goto(`${MILL1}/labels?size=${size}`);
		await page.emulateMedia({ media: 'print' });
		const qrs = page.getByTestId('label-qr');
		await expect(qrs).toHaveCount(expected.length);
		const decoded: string[] = [];
		for (let i = 0; i < expected.length; i++) decoded.push(decode(await qrs.nth(i).screenshot())!);
		expect(decoded.sort(), `${size} labels`).toEqual(expected);
		await expect(page.getByTestId('label').filter({ hasText: 'T2 · H2' })).toContainText('Mill 1');
		await expect(page.getByRole('button', { name: 'Print' })).toBeHidden();
		await shot(page, `labels-print-${size}`);
		// Print to PDF with the sheet's own page size: one page per label on the label printer.
		const pdf = (await page.pdf({ preferCSSPageSize: true, printBackground: true })).toString(
			'latin1'
		);
		const pages = pdf.match(/\/Type\s*\/Page[^s]/g)?.length ?? 0;
		if (size === 'label') expect(pages).toBe(expected.length);
		else expect(pages).toBe(1);
		await page.emulateMedia({ media: 'screen' });
	}
});

test('a scanned label opens its touch-off page after sign-in', async ({ page }) => {
	const url = `${MILL1}/readings/tool/2`;
	await page.goto(url);
	await expect(page).toHaveURL(/\/signin\?next=/);
	await page.getByLabel('E-mail').fill(FERNHILL.operator);
	await page.getByLabel('Password').fill(DEMO_PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(new RegExp(`${url}$`));
	await expect(page.getByRole('heading', { name: /Touch off T2/ })).toBeVisible();
});

test('machine mode shows the setup on the table and picks up a new reading by itself', async ({
	page
}) => {
	await signIn(page);
	await page.setViewportSize({ width: 820, height: 1180 });
	await page.goto(`${MILL1}/machine-mode`);
	await expect(page.getByText('On the table:')).toContainText('Pump housing');
	await expect(page.getByTestId('mode-fixture')).toHaveCount(2);
	await expect(page.getByTestId('cautions')).toBeVisible();
	await expect(
		page
			.getByTestId('mode-tool')
			.filter({ hasText: 'T1 · H1' })
			.getByRole('link', { name: 'Touch off T1' })
	).toBeVisible();
	const t5 = page.getByTestId('mode-tool').filter({ hasText: 'T5 · H5' });
	await expect(t5).not.toContainText('measured just now');

	// Another operator re-touches T5 from their own device (same value, so other tests' demo
	// numbers stay as they are); the page shows the new measurement within a poll or two.
	const bea = await signedInClient('bea@fernhill.example');
	const offsets = await (await bea.get(`/api/v1${MILL1}/offsets`)).json();
	const tool5 = offsets.tools.find((t: { t: number }) => t.t === 5);
	const res = await bea.post(`/api/v1${MILL1}/readings`, {
		data: {
			clientKey: randomUUID(),
			kind: 'tool',
			toolId: String(tool5.id),
			measuredAt: new Date().toISOString(),
			form: { machineZ: tool5.value.toFixed(4), touchedThrough: 'directly' }
		}
	});
	expect(res.status()).toBe(201);
	await bea.dispose();
	await expect(t5).toContainText('measured just now', { timeout: 25_000 });
	await expect(t5.locator('.num')).toHaveText(`${tool5.value.toFixed(4)} in`);
	await shot(page, 'machine-mode-updated');
});
