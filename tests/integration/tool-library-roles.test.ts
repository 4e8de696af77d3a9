import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { assignFormSchema, presetterMappingSchema } from '$lib/schemas/tool-library';
import { config } from '$lib/server/config';
import { createDb } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { getMachine } from '$lib/server/offsets/machine-state';
import { createShopWithOwner } from '$lib/server/shops/create';
import { assignAssembly } from '$lib/server/tool-library/assign';
import { listAssemblies } from '$lib/server/tool-library/library';
import { importPresetterCsv, saveMapping } from '$lib/server/tool-library/presetter-import';
import { uniqueSuffix } from './db';

/**
 * The tool library under the per-shop database role (issue 13's least privilege), as the app
 * runs it: a shop provisioned by the app role can save its mapping, import a presetter file and
 * assign an assembly, but cannot change or delete a measurement, a mapping or an assignment.
 */
const app: Knex = createDb(config.appDatabaseUrl);
let shop: { id: number; schemaName: string };
let actor: { id: number; email: string };
let machineId: number;
const inShop = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shop, fn, app);

beforeAll(async () => {
	const email = `lib-roles-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		app,
		{ name: 'Library roles', slug: `lib-roles-${uniqueSuffix()}` },
		{ name: 'L Owner', email, password: 'correct-horse-1' }
	);
	shop = created.shop;
	actor = { id: created.userId, email };
	await inShop(async (trx) => {
		const [m] = await trx('machines')
			.insert({
				name: 'Gauge mill',
				units: 'inch',
				z_travel: 20,
				resolution: 0.0001,
				convention: 'gauge-length'
			})
			.returning('id');
		machineId = Number(m.id);
		await trx('reference_surfaces').insert({
			machine_id: m.id,
			version: 1,
			instrument: 'gauge block',
			height: 2,
			gauge_line_z: -19.5
		});
	});
});
afterAll(async () => {
	await app.destroy();
});

describe('tool library as the shop role', () => {
	it('imports and assigns, and the records stay append-only', async () => {
		await inShop((trx) =>
			saveMapping(
				trx,
				presetterMappingSchema.parse({
					name: 'id',
					gaugeLength: 'len',
					units: 'inch',
					decimalSeparator: 'point',
					delimiter: 'comma'
				}),
				actor
			)
		);
		const r = await inShop((trx) =>
			importPresetterCsv(
				trx,
				'id,len\nR-1,4.5\n',
				{ fileName: 'x.csv', preview: false, timeZone: 'UTC' },
				actor
			)
		);
		expect(r).toMatchObject({ ok: true, imported: 1 });
		const id = (await inShop((trx) => listAssemblies(trx)))[0].id;
		const assigned = await inShop(async (trx) =>
			assignAssembly(
				trx,
				id,
				(await getMachine(trx, machineId))!,
				assignFormSchema.parse({ machineId, t: 3 }),
				actor
			)
		);
		// DESIGN.md §2: gauge-length H = L.
		expect(assigned.preview.value).toBe(4.5);
		for (const table of [
			'assembly_measurements',
			'presetter_mappings',
			'presetter_imports',
			'assembly_assignments',
			'assembly_assignment_ends'
		]) {
			await expect(
				inShop((trx) => trx(table).update({ id: 999 })),
				table
			).rejects.toThrow(/permission denied/);
			await expect(
				inShop((trx) => trx(table).del()),
				table
			).rejects.toThrow(/permission denied/);
		}
	});
});
