import { createHash } from 'node:crypto';
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Knex } from 'knex';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkProgram, type ProgramCheckResult } from '$lib/offsets';
import { withShop } from '$lib/server/db/tenant';
import { PROGRAM_MAX_BYTES } from '$lib/server/programs/file';
import type { CheckInput } from '$lib/server/programs/input';
import { versionResult } from '$lib/server/programs/load';
import { buildReport } from '$lib/server/programs/report';
import { recheckVersion } from '$lib/server/programs/recheck';
import { processProgramCheck } from '$lib/server/programs/run';
import { summarize } from '$lib/server/programs/summary';
import { getVersionFile, listPrograms, readLines, uploadProgram } from '$lib/server/programs/store';
import { createShopWithOwner } from '$lib/server/shops/create';
import { getSetupDetail } from '$lib/server/setups/queries';
import { createSetup, type Actor } from '$lib/server/setups/write';
import { testDb, uniqueSuffix } from './db';
import { insertTwoFixtureMill } from './two-fixture-mill';

const knex: Knex = testDb();
let uploads: string;
let shop: { id: number; schemaName: string; slug: string };
let actor: Actor;
let setupId: number;

const inShop = <T>(fn: (trx: Knex.Transaction) => Promise<T>) => withShop(shop, fn, knex);

/**
 * The pump housing of DESIGN.md §9 on an inch reference-touch mill: G54 part top 2.8125 in above
 * the reference, G55 1.0630 in; tallest obstacle 3.125 in + 0.5 in margin → clearance height
 * 3.625 in (planes G54 Z 0.8125, G55 Z 2.5620).
 */
beforeAll(async () => {
	uploads = await mkdtemp(join(tmpdir(), 'dk-programs-'));
	process.env.UPLOADS_DIR = uploads;
	const email = `programs-${uniqueSuffix()}@example.test`;
	const created = await createShopWithOwner(
		knex,
		{ name: 'Programs Test Shop', slug: `programs-${uniqueSuffix()}` },
		{ name: 'Pat Programmer', email, password: 'correct-horse-1' }
	);
	shop = created.shop;
	actor = { id: created.userId, email };
	setupId = await inShop(async (trx) => {
		const m = await insertTwoFixtureMill(trx);
		const r = await createSetup(
			trx,
			{
				machineId: m.id,
				name: 'Pump housing, ops A and B',
				job: 'Job 1',
				clearanceMargin: 0.5,
				fixtures: [
					{ fixtureId: m.fixtures.G54, obstacleHeight: 3.125 },
					{ fixtureId: m.fixtures.G55, obstacleHeight: 1.875 }
				],
				toolIds: [m.t1, m.t2],
				ops: []
			},
			actor
		);
		if (!r.ok) throw new Error(JSON.stringify(r.issues));
		return r.value;
	});
});

afterAll(async () => {
	await knex.destroy();
	await rm(uploads, { recursive: true, force: true });
});

const CLEAN = [
	'%',
	'O4471 (PUMP HOUSING)',
	'G20 G17 G40 G80 G90',
	'T1 M6',
	'G54 G0 X-2. Y1.',
	'G43 H1 Z1.',
	'Z0.1',
	'G1 Z0. F40.',
	'X6. F60.',
	'G0 Z1.', // 10: tip 3.8125 ≥ 3.625
	'G55 X-2. Y1.', // 11
	'Z3.',
	'G1 Z0. F40.',
	'G0 Z3.',
	'G91 G28 Z0.',
	'M30',
	'%'
];
/** Line 10 stays low (tip 2.9125 in) before the move to G55; T2 is loaded with no G43. */
const BAD = [
	...CLEAN.slice(0, 9),
	'G0 Z0.1', // 10
	'G55 X-2. Y1.', // 11: low-traverse stop
	'G0 Z3.', // 12
	'T2 M6', // 13
	'G0 X1. Y1.', // 14
	'Z0.5', // 15: no-length-comp stop
	'G91 G28 Z0.',
	'M30',
	'%'
];
const text = (lines: string[]) => lines.join('\n') + '\n';
const file = (name: string, body: string | Uint8Array, type = 'text/plain') =>
	new File([body as BlobPart], name, { type });

async function upload(f: unknown, name = '') {
	return inShop(async (trx) =>
		uploadProgram(trx, shop.schemaName, (await getSetupDetail(trx, setupId))!, f, name, actor)
	);
}
async function rows(table: string): Promise<number> {
	return inShop(async (trx) => Number((await trx(table).count({ n: '*' }))[0].n));
}
async function filesOnDisk(): Promise<string[]> {
	const out: string[] = [];
	const walk = async (d: string) => {
		for (const e of await readdir(d, { withFileTypes: true }).catch(() => [])) {
			if (e.isDirectory()) await walk(join(d, e.name));
			else out.push(join(d, e.name));
		}
	};
	await walk(uploads);
	return out.sort();
}
const where = (r: ProgramCheckResult) =>
	r.findings.map((f) => [
		f.kind,
		f.subject.type === 'program-line' ? f.subject.line : 0,
		f.severity
	]);
async function checkRow(id: number) {
	return inShop((trx) => trx('program_checks').where({ id }).first());
}

describe('upload', () => {
	let programId: number;

	it('stores the text as version 1 with a finished check (small programs: in the request)', async () => {
		const body = text(CLEAN);
		const r = await upload(file('O4471 pump.nc', body));
		expect(r).toMatchObject({ ok: true, version: 1, background: false });
		if (!r.ok) return;
		programId = r.programId;
		const v = await inShop((trx) => trx('program_versions').where({ id: r.versionId }).first());
		expect(v).toMatchObject({
			program_id: String(r.programId),
			version: 1,
			original_name: 'O4471 pump.nc',
			line_count: 17,
			sha256: createHash('sha256').update(body).digest('hex')
		});
		expect(Number(v.byte_size)).toBe(Buffer.byteLength(body));
		expect(await readFile(join(uploads, v.storage_key), 'utf8')).toBe(body);
		const c = await checkRow(r.checkId);
		expect(c).toMatchObject({ status: 'done', mode: 'inline', stops: 0, cautions: 0 });
		expect(c.result.findings).toEqual([]);
		expect(c.result.stats.clearancePlanes).toEqual({ G54: 0.8125, G55: 2.562 });
		expect(c.result.stats.tipZRange['1'].min).toBe(1.063);
		const programs = await inShop((trx) => listPrograms(trx, setupId));
		expect(programs.map((p) => [p.name, p.versionCount])).toEqual([['O4471 pump', 1]]);
	});

	it('a second upload under the same name adds version 2 and keeps version 1', async () => {
		const r = await upload(file('O4471-fast.nc', text(BAD)), 'O4471 pump');
		expect(r).toMatchObject({ ok: true, programId, version: 2, background: false });
		if (!r.ok) return;
		const c = await checkRow(r.checkId);
		// Line 15: T2 moves with H1 still in force (no G43 H2): no-length-comp, and T2's real tip
		// ends below G55's part top at rapid: rapid-into-part (docs/OFFSETS.md §13).
		expect(where(c.result)).toEqual([
			['low-traverse', 11, 'stop'],
			['no-length-comp', 15, 'stop'],
			['rapid-into-part', 15, 'stop']
		]);
		expect(c.stops).toBe(3);
		const { versions } = await inShop((trx) => versionResult(trx, programId, null));
		expect(versions.map((v) => [v.version, v.check?.stops])).toEqual([
			[2, 3],
			[1, 0]
		]);
		// Both files kept.
		expect((await filesOnDisk()).length).toBe(2);
	});

	it('the report names the setup, the exact text (SHA-256), findings with their lines, cautions', async () => {
		const report = await inShop(async (trx) => {
			const r = await versionResult(trx, programId, '2');
			return buildReport({
				shopName: 'Programs Test Shop',
				setup: { id: setupId, name: 'Pump housing, ops A and B', job: 'Job 1' },
				program: { id: programId, name: 'O4471 pump' },
				version: r.version,
				check: r.detail!.check,
				input: r.detail!.input,
				result: r.detail!.result!,
				lineText: r.lineText,
				generatedAt: new Date('2026-12-02T10:00:00Z'),
				generatedBy: 'Pat Programmer'
			});
		});
		expect(report.filename).toBe('program-check-o4471-pump-v2.md');
		expect(report.text).toContain(createHash('sha256').update(text(BAD)).digest('hex'));
		expect(report.text).toMatch(/STOP — 3 stop findings/);
		expect(report.text).toContain("- Checked as: ISO-style (from the machine's control style)");
		expect(report.text).toMatch(/\*\*STOP\*\* · Rapid move below the clearance plane · line 11/);
		expect(report.text).toContain('`G55 X-2. Y1.`');
		expect(report.text).toMatch(/\| G54 \| 2\.8125 in \|/);
		expect(report.text).toContain('Lift clear in Z before any move between fixtures.');
	});

	it('checks a version again in the other dialect: a new check row, same setup state, the old one kept', async () => {
		const r = await inShop(async (trx) => {
			const v = await versionResult(trx, programId, '2');
			const before = v.detail!;
			const again = await recheckVersion(trx, programId, v.version.id, 'rs274ngc', actor);
			const after = await versionResult(trx, programId, '2');
			const count = Number(
				(await trx('program_checks').where({ version_id: v.version.id }).count({ n: '*' }))[0].n
			);
			return { before, again, after: after.detail!, count };
		});
		expect(r.again).toMatchObject({ ok: true, background: false });
		expect(r.count).toBe(2);
		expect(r.after.check.id).not.toBe(r.before.check.id);
		// The test mill's control style is ISO-style; RS274NGC-style when chosen.
		expect(summarize(r.before.input, r.before.result!).dialect).toEqual({
			code: 'iso',
			label: 'ISO-style',
			from: 'machine'
		});
		expect(summarize(r.after.input, r.after.result!).dialect).toEqual({
			code: 'rs274ngc',
			label: 'RS274NGC-style',
			from: 'chosen'
		});
		// Same offsets as the first check: only the dialect differs, and this program reads the
		// same in both.
		expect({ ...r.after.input.programSetup, dialect: undefined }).toEqual({
			...r.before.input.programSetup,
			dialect: undefined
		});
		expect(where(r.after.result!)).toEqual(where(r.before.result!));
		expect(r.after.check.stops).toBe(3);
	});

	it('the text view reads a window of lines (LF, CRLF and lone CR all end a line)', async () => {
		const r = await upload(file('mixed.txt', 'G20\r\nG90\rT1 M6\nG54 G0 X0 Y0\n'));
		expect(r.ok).toBe(true);
		if (!r.ok) return;
		const f = await inShop((trx) => getVersionFile(trx, r.programId, r.versionId));
		expect(await readLines(f!.path, 2, 3)).toEqual([
			{ n: 2, text: 'G90' },
			{ n: 3, text: 'T1 M6' }
		]);
		expect(f!.lineCount).toBe(4);
	});
});

describe('large programs: the background processor', () => {
	/** ~100,000 lines: facing passes on G54, one low rapid to G55 and a tool without G43 on the way. */
	function bigProgram(): string {
		const out = ['%', 'O9000 (LONG PROGRAM)', 'G20 G17 G40 G80 G90', 'T1 M6', 'G54 G0 X0. Y0.'];
		out.push('G43 H1 Z1.', 'G1 Z0. F40.');
		for (let i = 0; out.length < 60_000; i++) out.push(`X${(i % 50) / 10}1 Y${(i % 7) / 10}`);
		out.push('G0 Z0.1', 'G55 X0. Y0.'); // low rapid between fixtures
		out.push('G0 Z3.', 'T2 M6', 'G0 X1. Y1.', 'Z0.5'); // no G43 for T2
		out.push('G43 H2 Z1.', 'G1 Z0.');
		for (let i = 0; out.length < 100_000; i++) out.push(`X${(i % 40) / 10}2 Y${(i % 9) / 10}`);
		out.push('G0 Z3.', 'G91 G28 Z0.', 'M30', '%');
		return out.join('\n') + '\n';
	}

	it('queues the check, streams the file through the engine and stores what the inline path finds', async () => {
		const body = bigProgram();
		const before = await filesOnDisk();
		const r = await upload(file('O9000.nc', body), 'Long program');
		expect(r).toMatchObject({ ok: true, background: true });
		if (!r.ok) return;
		expect((await filesOnDisk()).length).toBe(before.length + 1);
		const queued = await checkRow(r.checkId);
		expect(queued).toMatchObject({ status: 'queued', mode: 'background', result: null });

		const outcome = await processProgramCheck({ shopId: shop.id, checkId: r.checkId }, knex);
		expect(outcome.status).toBe('done');
		const done = await checkRow(r.checkId);
		expect(done.status).toBe('done');
		expect(done.progress_lines).toBe(100_004);
		expect(Number(done.progress_bytes)).toBe(Buffer.byteLength(body));
		expect(done.checked_at).not.toBeNull();

		// Same findings and stats as checking the whole text at once (the inline path).
		const inline = checkProgram(body, (queued.input as CheckInput).programSetup);
		expect(done.result).toEqual(JSON.parse(JSON.stringify(inline)));
		expect(where(done.result)).toEqual([
			['low-traverse', 60_002, 'stop'],
			['no-length-comp', 60_006, 'stop'],
			['rapid-into-part', 60_006, 'stop']
		]);

		// Idempotent: a second delivery of the job does nothing.
		expect((await processProgramCheck({ shopId: shop.id, checkId: r.checkId }, knex)).status).toBe(
			'skipped'
		);
	});

	it('a check whose stored file has gone missing fails with a plain note', async () => {
		const r = await upload(file('O9001.nc', bigProgram()), 'Gone');
		if (!r.ok) throw new Error(r.message);
		const v = await inShop((trx) => trx('program_versions').where({ id: r.versionId }).first());
		await rm(join(uploads, v.storage_key));
		expect((await processProgramCheck({ shopId: shop.id, checkId: r.checkId }, knex)).status).toBe(
			'failed'
		);
		expect((await checkRow(r.checkId)).note).toMatch(/missing/);
	});
});

describe('bad uploads: refused with the file named and why, nothing written', () => {
	const cases: [string, () => unknown, RegExp][] = [
		['no file', () => null, /choose a \.nc, \.ngc, \.tap or \.txt file/],
		['wrong type', () => file('drawing.pdf', '%PDF-1.7 …'), /"drawing\.pdf".*\.nc, \.ngc.*\.pdf/],
		['empty', () => file('empty.nc', ''), /"empty\.nc" is empty/],
		['blank lines only', () => file('blank.nc', '\n\n  \n'), /"blank\.nc" has no program text/],
		[
			'binary',
			() => file('setup.nc', new Uint8Array([0x50, 0x4b, 3, 4, 0, 0, 0, 1, 2])),
			/"setup\.nc" is a ZIP archive.*plain text/
		],
		[
			'oversize',
			() => file('huge.nc', new Uint8Array(PROGRAM_MAX_BYTES + 1).fill(0x47)),
			/"huge\.nc" is 20\.0 MB; programs can be 20\.0 MB at most/
		],
		[
			'not UTF-8 (Windows-1252 degree sign)',
			() => file('latin.nc', new Uint8Array([...Buffer.from('G20\n(ANGLE 90'), 0xb0, 0x29, 0x0a])),
			/"latin\.nc" is not ASCII or UTF-8 text \(line 2/
		],
		[
			'UTF-16',
			() => file('wide.nc', new Uint8Array([0xff, 0xfe, 0x47, 0, 0x32, 0, 0x30, 0])),
			/"wide\.nc" is saved as UTF-16/
		]
	];
	for (const [what, make, message] of cases) {
		it(what, async () => {
			const counts = [
				await rows('programs'),
				await rows('program_versions'),
				await rows('program_checks')
			];
			const files = await filesOnDisk();
			const r = await upload(make(), 'Refused');
			expect(r.ok).toBe(false);
			if (!r.ok) expect(r.message).toMatch(message);
			expect([
				await rows('programs'),
				await rows('program_versions'),
				await rows('program_checks')
			]).toEqual(counts);
			expect(await filesOnDisk()).toEqual(files);
		});
	}
});
