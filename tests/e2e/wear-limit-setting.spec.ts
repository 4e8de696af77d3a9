import { expect, test, type Page } from '@playwright/test';
import knex, { type Knex } from 'knex';
import { hashPassword } from '../../src/lib/server/auth/password';
import { signedInClient } from './helpers';

/**
 * The shop's wear limit (issue 20) on the settings page: typed in the shop's units, read by the
 * strict number reader, kept in mm. Bad input is refused with the field, the value and why and
 * changes nothing; an operator cannot change it. A shop of its own, so the demo shops stay as
 * other specs expect.
 */
let sql: Knex;
test.beforeAll(() => {
	const url = process.env.DATABASE_URL;
	if (!url?.endsWith('_test')) throw new Error('e2e needs the *_test database');
	sql = knex({ client: 'pg', connection: url, pool: { min: 0, max: 2 } });
});
test.afterAll(async () => {
	await sql?.destroy();
});

const PASSWORD = 'wear-limit-pass-7';
const stamp = () => `${Date.now().toString(36)}${Math.floor(Math.random() * 1e4)}`;

async function signUp(page: Page, name: string, email: string, shopName: string): Promise<string> {
	await page.goto('/signup');
	await page.getByLabel('Your name').fill(name);
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(PASSWORD);
	await page.getByLabel('Shop name').fill(shopName);
	await page.getByRole('button', { name: 'Create the shop' }).click();
	// Provisioning a shop takes a few seconds on a busy machine.
	await expect(page).toHaveURL(/\/shops\/[a-z0-9-]+$/, { timeout: 30_000 });
	return new URL(page.url()).pathname.split('/').pop()!;
}

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
