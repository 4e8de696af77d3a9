import { expect, test, type Page } from '@playwright/test';
import type { Knex } from 'knex';
import { hashPassword } from '../../src/lib/server/auth/password';
import { openTestDb, signedInClient, signUpThroughForm } from './helpers';

/**
 * The shop's wear limit (issue 20) on the settings page: typed in the shop's units, read by the
 * strict number reader, kept in mm. Bad input is refused with the field, the value and why and
 * changes nothing; an operator cannot change it. A shop of its own, so the demo shops stay as
 * other specs expect.
 */
let sql: Knex;
test.beforeAll(() => {
	sql = openTestDb();
});
test.afterAll(async () => {
	await sql?.destroy();
});

const PASSWORD = 'wear-limit-pass-7';
const stamp = () => `${Date.now().toString(36)}${Math.floor(Math.random() * 1e4)}`;

/** A stranger signs up through the form (and the e-mailed link); answers the shop's slug. */
const signUp = (page: Page, name: string, email: string, shopName: string) =>
	signUpThroughForm(page, name, email, shopName, PASSWORD);

test('the owner sets the wear limit in the shop units; bad input is refused and changes nothing; an operator cannot change it', async ({
	page
}) => {
	const s = stamp();
	const slug = await signUp(page, 'Wes Wear', `wear-${s}@example.test`, `Wear Works ${s}`);
	const stored = async () =>
		(await sql('shops').where({ slug }).first('wear_limit_mm')).wear_limit_mm as string | null;

	await page.goto(`/shops/${slug}/settings`);
	const field = page.getByLabel('Wear limit (in)');
	await expect(field).toHaveValue('');

	for (const [typed, why] of [
		['0,005', /Wear limit.*0,005/],
		['0.5', /Wear limit 0\.5 in is out of range: use 0\.0001 to 0\.1 in/]
	] as const) {
		await field.fill(typed);
		await page.getByRole('button', { name: 'Save settings' }).click();
		await expect(page.locator('#field-wearLimit ~ .field-error')).toHaveText(why);
		expect(await stored()).toBeNull();
	}

	await field.fill('0.0050');
	await page.getByRole('button', { name: 'Save settings' }).click();
	await expect(page.getByTestId('settings-saved')).toContainText('wear limit');
	// 0.0050 in kept as 0.127 mm (1 in = 25.4 mm exactly, NIST SP 811).
	expect(Number(await stored())).toBe(0.127);
	await page.reload();
	await expect(page.getByLabel('Wear limit (in)')).toHaveValue('0.005');

	// An operator of the shop cannot change it.
	const email = `op-${s}@example.test`;
	const [u] = await sql('users')
		.insert({ email, name: 'Otto Operator', password_hash: await hashPassword(PASSWORD) })
		.returning('id');
	const shop = await sql('shops').where({ slug }).first('id', 'name', 'time_zone');
	await sql('memberships').insert({ user_id: u.id, shop_id: shop.id, role: 'operator' });
	const op = await signedInClient(email, PASSWORD);
	const res = await op.post(`/shops/${slug}/settings`, {
		form: {
			name: shop.name,
			timeZone: shop.time_zone,
			defaultUnits: 'inch',
			checkHour: '2',
			wearLimit: '0.0200',
			wearLimitUnits: 'inch'
		},
		headers: { accept: 'application/json' }
	});
	const body = await res.json().catch(() => ({}));
	expect(body.status ?? res.status()).toBe(403);
	expect(Number(await stored())).toBe(0.127);
	await op.dispose();
});

test('a saved offset file holding a different G54 X and H3 radius wear is reported on the read-back page', async ({
	page
}) => {
	// Forms read: G10 L2 X/Y (NIST RS274NGC v3 §3.5.5); ISO-style G10 L10/L13 (ISO-style mill
	// programming manual §1.2.10, SOURCES.md 3). Values invented.
	const s = stamp();
	const slug = await signUp(page, 'Rhea Back', `rb-${s}@example.test`, `Readback Works ${s}`);
	const { schema_name: schema } = await sql('shops').where({ slug }).first('schema_name');
	const db = () => sql.withSchema(schema);
	const [m] = await db()
		.table('machines')
		.insert({
			name: 'RB Mill',
			units: 'inch',
			z_travel: 20,
			resolution: 0.0001,
			control_style: 'iso'
		})
		.returning('id');
	const [t] = await db()
		.table('tools')
		.insert({ machine_id: m.id, t_number: 3, h_number: 3, description: 'end mill' })
		.returning('id');
	expect(Number(t.id)).toBeGreaterThan(0);
	const base = {
		machine_id: m.id,
		units: 'inch',
		convention: 'reference-touch',
		reference_version: 1
	};
	await db()
		.table('offset_versions')
		.insert([
			{ ...base, register_kind: 'work', register: 'G54', value: 1.25 },
			{ ...base, register_kind: 'work', register: 'G55', value: 2.5 },
			{ ...base, register_kind: 'tool', register: '3', value: -13.6182 }
		]);
	const comp = { machine_id: m.id, units: 'inch', source: 'entered' };
	await db()
		.table('offset_component_versions')
		.insert([
			{ ...comp, register_kind: 'work', register: 'G54', component: 'x', value: -12.3 },
			{ ...comp, register_kind: 'work', register: 'G55', component: 'x', value: -6.3 },
			{
				...comp,
				register_kind: 'tool',
				register: '3',
				component: 'radius-wear',
				value: -0.001,
				cutter_register: 'radius'
			}
		]);
	const file = [
		'%',
		'G20',
		'G10 L2 P1 X-6.3000 Y0. Z1.2500',
		'G10 L2 P2 X-6.3000 Y0. Z2.5000',
		'G10 L10 P3 R-13.6182',
		'G10 L13 P3 R0.0010',
		'%'
	].join('\n');
	await page.goto(`/shops/${slug}/machines/${m.id}/readback`);
	await page.locator('input[name="file"]').setInputFiles({
		name: 'offsets.nc',
		mimeType: 'text/plain',
		buffer: Buffer.from(file)
	});
	await page.getByRole('button', { name: 'Upload and compare' }).click();
	const result = page.getByTestId('readback-result');
	const x = result.locator('[data-testid="readback-row"][data-register="G54 X"]');
	await expect(x).toHaveAttribute('data-status', 'different');
	await expect(x.locator('[data-cause="off-by-one"]')).toContainText('G55 X');
	await expect(
		result.locator('[data-testid="readback-row"][data-register="H3 radius wear"]')
	).toHaveAttribute('data-status', 'different');
	await expect(
		result.locator('[data-testid="readback-row"][data-register="G55 X"]')
	).toHaveAttribute('data-status', 'equal');
	await page.screenshot({ path: '.data/test/readback-components.png', fullPage: true });
	// Each difference is a Stop finding on that component (findings page, board, digest).
	const open = await db()
		.table('findings')
		.where({ kind: 'readback-mismatch', status: 'open' })
		.pluck('subject');
	expect(open.sort()).toEqual(['G54 X', 'H3 radius wear']);
});
