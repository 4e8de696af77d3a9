import { expect, test, type Page } from '@playwright/test';
import type { Knex } from 'knex';
import { parse } from 'csv-parse/sync';
import yauzl from 'yauzl';
import { hashPassword } from '../../src/lib/server/auth/password';
import { formatWhen } from '../../src/lib/time';
import { mailsTo, openTestDb, signUpThroughForm } from './helpers';

/**
 * A shop's whole life: a stranger signs up and follows the first steps to a first
 * touch-off; the owner changes the time zone; people are removed (with confirmation) and
 * ownership is handed over; the data is exported; the shop is deleted, restored, deleted again
 * and dropped. Each test starts its own shop so the demo shops stay as other specs expect.
 */
let sql: Knex;
test.beforeAll(() => {
	sql = openTestDb();
});
test.afterAll(async () => {
	await sql?.destroy();
});

const PASSWORD = 'shop-life-pass-7';
const stamp = () => `${Date.now().toString(36)}${Math.floor(Math.random() * 1e4)}`;

/** A stranger signs up through the form (and the e-mailed link); answers the shop's slug. */
const signUp = (page: Page, name: string, email: string, shopName: string) =>
	signUpThroughForm(page, name, email, shopName, PASSWORD);

async function signIn(page: Page, email: string, password = PASSWORD) {
	await page.goto('/signin');
	await page.getByLabel('E-mail').fill(email);
	await page.getByLabel('Password').fill(password);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/shops/);
}

/** Adds a person with a password straight to the database and makes them a member. */
async function addMember(slug: string, name: string, role: string) {
	const email = `${name.toLowerCase()}-${stamp()}@example.test`;
	const [u] = await sql('users')
		.insert({ email, name, password_hash: await hashPassword(PASSWORD) })
		.returning('id');
	const shop = await sql('shops').where({ slug }).first('id');
	await sql('memberships').insert({ user_id: u.id, shop_id: shop.id, role });
	return { email, name, id: Number(u.id) };
}

test('a stranger signs up, sees the address it makes, and follows the first steps to a first touch-off', async ({
	page
}) => {
	const s = stamp();
	await page.goto('/signup');
	await page.getByLabel('Shop name').fill(`Lathe & Mill ${s}`);
	await expect(page.getByTestId('slug-preview')).toContainText(`/shops/lathe-mill-${s}`);
	const slug = await signUp(page, 'Sam Stranger', `sam-${s}@example.test`, `Lathe & Mill ${s}`);
	expect(slug).toBe(`lathe-mill-${s}`);

	const guide = page.getByTestId('first-steps');
	await expect(guide).toContainText('0 of 5 done');
	await expect(page.getByTestId('step-machine')).toHaveAttribute('data-done', 'no');

	// 1–2: a machine, with its reference recorded as it is added.
	await guide.getByRole('link', { name: 'Add a machine' }).click();
	await page.getByLabel('Name').fill('Mill A');
	await page.getByLabel('Z travel (in)').fill('20');
	await page.getByRole('button', { name: 'Add the machine' }).click();
	await expect(page.getByRole('heading', { name: 'Mill A' })).toBeVisible();
	await page.goto(`/shops/${slug}`);
	await expect(page.getByTestId('step-machine')).toHaveAttribute('data-done', 'yes');
	await expect(page.getByTestId('step-reference')).toHaveAttribute('data-done', 'yes');
	await expect(page.getByTestId('step-touch-off')).toHaveAttribute('data-done', 'no');

	// 3: a tool, then its first touch-off.
	await page.getByTestId('first-steps').getByRole('link', { name: 'Touch off tools' }).click();
	await page.getByLabel('T number').fill('1');
	await page.getByLabel('H number').fill('1');
	await page.getByLabel('Description').fill('12 mm end mill');
	await page.getByRole('button', { name: 'Add tool' }).click();
	await page.goto(`/shops/${slug}`);
	await page.getByRole('link', { name: 'Mill A' }).click();
	await page
		.getByTestId('tools-table')
		.getByRole('row')
		.filter({ hasText: 'T1' })
		.getByRole('link', { name: 'Touch off' })
		.click();
	await page.getByRole('textbox', { name: /^Machine Z/ }).fill('-14.2500');
	await page.getByRole('button', { name: 'Work out offset' }).click();
	await page.getByRole('button', { name: 'Save reading and H1' }).click();
	await expect(page.getByRole('status').first()).toBeVisible();

	await page.goto(`/shops/${slug}`);
	await expect(page.getByTestId('step-touch-off')).toHaveAttribute('data-done', 'yes');
	await expect(guide).toContainText('3 of 5 done');
	// Put away, it stays away.
	await guide.getByRole('button', { name: 'Hide this guide' }).click();
	await expect(page.getByTestId('first-steps')).toHaveCount(0);
	await page.reload();
	await expect(page.getByTestId('first-steps')).toHaveCount(0);
});

test('the owner changes the time zone and times change on server- and client-rendered pages alike', async ({
	page,
	request
}) => {
	const s = stamp();
	const email = `tz-${s}@example.test`;
	const slug = await signUp(page, 'Tess Zone', email, `Zone Works ${s}`);
	const shop = await sql('shops').where({ slug }).first('schema_name');
	const [{ at }] = await sql
		.withSchema(shop.schema_name)
		.from('audit_log')
		.where({ action: 'shop.created' })
		.select('at');
	const utc = formatWhen(new Date(at), 'UTC');
	const kolkata = formatWhen(new Date(at), 'Asia/Kolkata');
	expect(kolkata).not.toBe(utc);

	await page.goto(`/shops/${slug}/audit`);
	await expect(page.getByTestId('audit-table')).toContainText(utc);

	await page.getByRole('link', { name: 'Settings' }).click();
	await page.getByLabel('Time zone').selectOption('Asia/Kolkata');
	await page.getByRole('button', { name: 'Save settings' }).click();
	await expect(page.getByTestId('settings-saved')).toContainText('time zone');

	// Client-rendered: a navigation inside the app, drawn by the browser.
	await page.getByRole('link', { name: 'Audit log' }).click();
	await expect(page.getByTestId('audit-table')).toContainText(kolkata);
	await expect(page.getByTestId('audit-table')).toContainText('Setting changed');
	// Server-rendered: the HTML as the server sends it, no script run.
	const cookies = await page.context().cookies();
	const html = await (
		await request.get(`/shops/${slug}/audit`, {
			headers: { cookie: cookies.map((c) => `${c.name}=${c.value}`).join('; ') }
		})
	).text();
	expect(html).toContain(kolkata);
	expect(html).not.toContain(utc);
	// The fleet board draws its "refreshed" time in the browser, in the shop's zone too.
	await page.goto(`/shops/${slug}/fleet`);
	const shown = await page.getByTestId('board-refreshed').innerText();
	const nowThere = new Intl.DateTimeFormat('en-GB', {
		timeZone: 'Asia/Kolkata',
		hour: '2-digit',
		minute: '2-digit'
	});
	const candidates = [0, -60_000].map((d) => nowThere.format(new Date(Date.now() + d)));
	expect(candidates).toContain(shown.slice(0, 5));
});

test('removing a member asks first, naming them; the removed person is told they no longer have access; ownership is handed over', async ({
	page,
	browser
}) => {
	const s = stamp();
	const email = `own-${s}@example.test`;
	const slug = await signUp(page, 'Olga Owner', email, `People Works ${s}`);
	const omar = await addMember(slug, 'Oskar', 'operator');
	const lena = await addMember(slug, 'Lena', 'lead');

	await page.goto(`/shops/${slug}/members`);
	await expect(page.getByTestId('roles-explainer')).toContainText(
		'Hand ownership to another member'
	);
	const rows = page.getByTestId('members-table').getByRole('row');
	const order = await rows.allInnerTexts();
	// A role change keeps the row where it is.
	const lenaRow = rows.filter({ hasText: 'Lena' });
	await lenaRow.getByLabel('Role of Lena').selectOption('admin');
	await lenaRow.getByRole('button', { name: 'Change' }).click();
	await expect(page.getByRole('status')).toContainText('Role changed');
	expect((await rows.allInnerTexts()).map((r) => r.split('\t')[0])).toEqual(
		order.map((r) => r.split('\t')[0])
	);

	await page.getByRole('button', { name: 'Remove Oskar' }).click();
	const confirm = page.getByTestId('confirm-remove');
	await expect(confirm).toContainText(`Remove Oskar (${omar.email}) from People Works ${s}?`);
	await confirm.getByRole('button', { name: 'Cancel' }).click();
	await expect(page.getByTestId('members-table')).toContainText('Oskar');
	await page.getByRole('button', { name: 'Remove Oskar' }).click();
	await page.getByTestId('confirm-remove').getByRole('button', { name: 'Remove Oskar' }).click();
	await expect(page.getByRole('status')).toContainText('Oskar was removed');
	await expect(page.getByTestId('members-table')).not.toContainText('Oskar');

	// Oskar's next visit lands on a page that says so.
	const other = await browser.newPage();
	await signIn(other, omar.email);
	await other.goto(`/shops/${slug}/fleet`);
	await expect(other).toHaveURL(new RegExp(`/access-ended/${slug}$`));
	await expect(other.getByTestId('access-ended')).toContainText(
		`You no longer have access to People Works ${s}`
	);
	await other.close();

	// Ownership to Lena, confirmed by password (a wrong one changes nothing).
	await page.goto(`/shops/${slug}/settings/transfer`);
	await page.getByLabel('New owner').selectOption({ label: `Lena (${lena.email}) · Admin` });
	await page.getByLabel('Your password').fill('not-my-password-1');
	await page.getByRole('button', { name: 'Make Lena the owner' }).click();
	await expect(page.getByText('That password is not right')).toBeVisible();
	await page.getByLabel('Your password').fill(PASSWORD);
	await page.getByRole('button', { name: 'Make Lena the owner' }).click();
	await expect(page.getByRole('status')).toContainText('Lena is now the owner');
	const roles = await sql('memberships as m')
		.join('users as u', 'u.id', 'm.user_id')
		.join('shops as s', 's.id', 'm.shop_id')
		.where('s.slug', slug)
		.select('u.email', 'm.role');
	expect(Object.fromEntries(roles.map((r) => [r.email, r.role]))).toEqual({
		[email]: 'admin',
		[lena.email]: 'owner'
	});
	await expect
		.poll(async () => (await mailsTo(lena.email)).map((m) => m.subject).join('|'))
		.toContain('You are now the owner');
	expect((await mailsTo(email)).map((m) => m.subject).join('|')).toContain('You handed ownership');
	await page.goto(`/shops/${slug}/audit`);
	await expect(page.getByTestId('audit-table')).toContainText('Ownership handed over');
});

/** Every entry of a zip, as text. */
async function unzip(buffer: Buffer): Promise<Map<string, string>> {
	const zip = await new Promise<yauzl.ZipFile>((ok, fail) =>
		yauzl.fromBuffer(buffer, { lazyEntries: true }, (e, z) => (e ? fail(e) : ok(z!)))
	);
	const files = new Map<string, string>();
	await new Promise<void>((ok, fail) => {
		zip.on('entry', (entry: yauzl.Entry) =>
			zip.openReadStream(entry, (e, stream) => {
				if (e) return fail(e);
				const chunks: Buffer[] = [];
				stream!.on('data', (c: Buffer) => chunks.push(c));
				stream!.on('end', () => {
					files.set(entry.fileName, Buffer.concat(chunks).toString('utf8'));
					zip.readEntry();
				});
			})
		);
		zip.on('end', ok);
		zip.on('error', fail);
		zip.readEntry();
	});
	return files;
}

test('the owner exports everything: built in the background, e-mailed link, archive complete', async ({
	page
}) => {
	const s = stamp();
	const email = `exp-${s}@example.test`;
	const slug = await signUp(page, 'Eve Export', email, `Export Works ${s}`);
	await page.goto(`/shops/${slug}/machines/new`);
	await page.getByLabel('Name').fill('Mill E');
	await page.getByLabel('Z travel (in)').fill('20');
	await page.getByRole('button', { name: 'Add the machine' }).click();
	await expect(page.getByRole('heading', { name: 'Mill E' })).toBeVisible();

	await page.goto(`/shops/${slug}/settings/export`);
	await page.getByRole('button', { name: 'Export everything' }).click();
	await expect(page.locator('[data-testid^="export-"][data-status="done"]')).toBeVisible({
		timeout: 30_000
	});
	let link = '';
	await expect
		.poll(async () => {
			const mail = (await mailsTo(email)).find((m) => m.subject.includes('export'));
			link = mail?.text?.match(/https?:\/\/\S+\/settings\/export\/\S+/)?.[0] ?? '';
			return link;
		})
		.not.toBe('');
	const res = await page.request.get(new URL(link).pathname);
	expect(res.status()).toBe(200);
	expect(res.headers()['content-type']).toBe('application/zip');
	const files = await unzip(await res.body());
	const manifest = JSON.parse(files.get('manifest.json')!);
	const shop = await sql('shops').where({ slug }).first('schema_name');
	for (const t of manifest.tables as { table: string; file: string; rows: number }[]) {
		const [{ n }] = await sql.withSchema(shop.schema_name).from(t.table).count({ n: '*' });
		expect(t.rows, t.table).toBe(Number(n));
		expect(parse(files.get(t.file)!).length - 1, t.table).toBe(Number(n));
	}
	expect(manifest.tables.find((t: { table: string }) => t.table === 'machines').rows).toBe(1);
	// A made-up token is not a link.
	expect(
		(await page.request.get(`/shops/${slug}/settings/export/${'x'.repeat(43)}`)).status()
	).toBe(404);
});

test('deleting the shop: typed confirmation, read-only grace, restore, then the drop', async ({
	page
}) => {
	test.setTimeout(120_000);
	const s = stamp();
	const email = `del-${s}@example.test`;
	const slug = await signUp(page, 'Dee Delete', email, `Delete Works ${s}`);
	const { schema_name: schema } = await sql('shops').where({ slug }).first('schema_name');

	await page.goto(`/shops/${slug}/settings/delete`);
	await page.getByLabel(/Type the shop address/).fill('wrong-shop');
	await page.getByRole('button', { name: `Delete Delete Works ${s}` }).click();
	await expect(page.getByText(`type ${slug} exactly`)).toBeVisible();
	await page.getByLabel(/Type the shop address/).fill(slug);
	await page.getByRole('button', { name: `Delete Delete Works ${s}` }).click();
	await expect(page.getByTestId('deletion-scheduled')).toBeVisible();
	await expect(page.getByTestId('deletion-banner')).toBeVisible();
	// Read-only: a write is refused.
	const refused = await page.request.post(`/shops/${slug}/settings`, {
		form: { name: 'Renamed' },
		headers: { accept: 'application/json' }
	});
	const body = await refused.json().catch(() => ({}));
	expect(body.status ?? refused.status()).toBe(423);

	await page.getByRole('button', { name: `Restore Delete Works ${s}` }).click();
	await expect(page.getByTestId('restored')).toBeVisible();
	await expect(page.getByTestId('deletion-banner')).toHaveCount(0);

	await page.getByLabel(/Type the shop address/).fill(slug);
	await page.getByRole('button', { name: `Delete Delete Works ${s}` }).click();
	await expect(page.getByTestId('deletion-scheduled')).toBeVisible();
	// The grace period is SHOP_DELETION_GRACE_SECONDS in the e2e server (playwright.config.ts).
	await expect
		.poll(
			async () =>
				(await sql.raw('select 1 from information_schema.schemata where schema_name = ?', [schema]))
					.rows.length,
			{ timeout: 90_000, intervals: [2_000] }
		)
		.toBe(0);
	const log = await sql('shop_lifecycle_log as l')
		.join('shops as s', 's.id', 'l.shop_id')
		.where('s.slug', slug)
		.orderBy('l.id')
		.pluck('l.action');
	expect(log).toEqual([
		'shop.deletion-requested',
		'shop.restored',
		'shop.deletion-requested',
		'shop.purged'
	]);
	// Each app process forgets the membership when the change feed tells it (a moment later).
	await expect
		.poll(
			async () => {
				await page.goto(`/shops/${slug}`);
				return new URL(page.url()).pathname;
			},
			{ timeout: 15_000 }
		)
		.toBe(`/access-ended/${slug}`);
	await expect(page.getByTestId('access-ended')).toContainText('deleted');
	await expect
		.poll(async () => (await mailsTo(email)).map((m) => m.subject).join('|'))
		.toContain('has been deleted');
});
