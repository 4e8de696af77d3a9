/**
 * "Export everything" (issue 18): the owner asks, the `shop-lifecycle` worker writes one zip
 * archive with a CSV file per table of the shop's schema (every table, so nothing new is ever
 * left out) and a `manifest.json` naming each file, its columns and its row count. All tables
 * are read in one repeatable-read snapshot, so the counts in the manifest are the rows in the
 * files. The owner is e-mailed a link that works for EXPORT_LINK_DAYS.
 */
import { createWriteStream } from 'node:fs';
import { mkdir, rm, stat } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { ZipArchive } from 'archiver';
import { stringify } from 'csv-stringify/sync';
import type { Knex } from 'knex';
import { audit } from '../audit';
import { enterShop } from '../db/roles';
import { hashToken, newToken } from '../auth/tokens';
import { config } from '../config';
import { assertShopSchema } from '../db/schema-name';
import { withShop, type ShopRef } from '../db/tenant';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { logLifecycle } from './lifecycle';
import { enqueueLifecycle } from './lifecycle-queue';

export const EXPORT_LINK_DAYS = 7;
const BATCH = 2_000;
/** Bookkeeping tables of the migration tool: not the shop's data. */
const SKIPPED = new Set(['knex_migrations', 'knex_migrations_lock']);

export interface ExportView {
	id: number;
	status: 'queued' | 'running' | 'done' | 'failed';
	progress: number;
	requestedAt: string;
	finishedAt: string | null;
	expiresAt: string | null;
	sizeBytes: number | null;
	expired: boolean;
	error: string | null;
}

export interface ManifestTable {
	table: string;
	file: string;
	columns: string[];
	rows: number;
}

export interface ExportManifest {
	format: 'datumkeep-export';
	version: 1;
	shop: { name: string; slug: string; timeZone: string };
	generatedAt: string;
	notes: string[];
	tables: ManifestTable[];
}

function exportDir(schemaName: string): string {
	assertShopSchema(schemaName);
	return join(resolve(config.uploadsDir), schemaName, 'exports');
}

export function exportPath(schemaName: string, exportId: number): string {
	return join(exportDir(schemaName), `export-${exportId}.zip`);
}

/** Asks for an export: a queued row, an audit entry, and the job. */
export async function requestExport(
	knex: Knex,
	shop: ShopRef & { slug: string },
	by: { id: number; email: string },
	ip = ''
): Promise<{ id: number; queued: boolean }> {
	const id = await knex.transaction(async (trx) => {
		const [row] = await trx('public.shop_exports')
			.insert({ shop_id: shop.id, requested_by: by.id })
			.returning('id');
		await logLifecycle(trx, {
			shopId: shop.id,
			shopSlug: shop.slug,
			action: 'shop.export-requested',
			actorUserId: by.id,
			actorEmail: by.email,
			detail: { exportId: Number(row.id) }
		});
		await enterShop(trx, shop.schemaName);
		await audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'shop.export-requested',
			target: `export:${row.id}`,
			ip
		});
		return Number(row.id);
	});
	const queued = await enqueueLifecycle({ kind: 'export', exportId: id });
	return { id, queued };
}

export async function listExports(
	knex: Knex,
	shopId: number,
	now = new Date()
): Promise<ExportView[]> {
	const rows = await knex('public.shop_exports')
		.where({ shop_id: shopId })
		.orderBy('id', 'desc')
		.limit(10)
		.select();
	return rows.map((r) => ({
		id: Number(r.id),
		status: r.status,
		progress: r.progress,
		requestedAt: new Date(r.requested_at).toISOString(),
		finishedAt: r.finished_at ? new Date(r.finished_at).toISOString() : null,
		expiresAt: r.expires_at ? new Date(r.expires_at).toISOString() : null,
		sizeBytes: r.size_bytes === null ? null : Number(r.size_bytes),
		expired: !!r.expires_at && new Date(r.expires_at) <= now,
		error: r.error
	}));
}

/** The archive behind an e-mailed link, when the token is right and the link has not expired. */
export async function exportForToken(
	knex: Knex,
	shop: ShopRef,
	token: string,
	now = new Date()
): Promise<{ path: string; fileName: string } | { expired: true } | undefined> {
	if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) return undefined;
	const row = await knex('public.shop_exports')
		.where({ shop_id: shop.id, token_hash: hashToken(token), status: 'done' })
		.first('id', 'expires_at', 'file_name');
	if (!row) return undefined;
	if (new Date(row.expires_at) <= now) return { expired: true };
	return { path: exportPath(shop.schemaName, Number(row.id)), fileName: row.file_name };
}

const cell = (v: unknown): unknown =>
	v === null || v === undefined
		? ''
		: v instanceof Date
			? v.toISOString()
			: Buffer.isBuffer(v)
				? v.toString('base64')
				: typeof v === 'object'
					? JSON.stringify(v)
					: v;

/**
 * Builds the archive of one export (the worker's processor). Idempotent: a finished export is
 * left alone; a retried one starts its file again.
 */
export async function buildExport(
	knex: Knex,
	exportId: number,
	onProgress: (pct: number) => Promise<void> | void = () => {}
): Promise<'done' | 'skipped'> {
	const job = await knex('public.shop_exports as e')
		.join('public.shops as s', 's.id', 'e.shop_id')
		.join('public.users as u', 'u.id', 'e.requested_by')
		.where('e.id', exportId)
		.first(
			'e.status',
			's.id as shop_id',
			's.slug',
			's.name',
			's.schema_name',
			's.time_zone',
			's.purged_at',
			'u.email',
			'u.name as user_name'
		);
	if (!job || job.status === 'done' || job.purged_at) return 'skipped';
	const shop: ShopRef = { id: Number(job.shop_id), schemaName: job.schema_name };
	await knex('public.shop_exports')
		.where({ id: exportId })
		.update({ status: 'running', progress: 0 });
	const path = exportPath(shop.schemaName, exportId);
	await mkdir(exportDir(shop.schemaName), { recursive: true });
	try {
		const manifest = await writeArchive(knex, shop, job, path, onProgress, exportId);
		const { token, hash } = newToken();
		const expires = new Date(Date.now() + EXPORT_LINK_DAYS * 86_400_000);
		const size = (await stat(path)).size;
		const fileName = `${job.slug}-export-${manifest.generatedAt.slice(0, 10)}.zip`;
		await knex('public.shop_exports').where({ id: exportId }).update({
			status: 'done',
			progress: 100,
			finished_at: new Date(),
			expires_at: expires,
			token_hash: hash,
			file_name: fileName,
			size_bytes: size,
			error: null
		});
		const url = `${config.origin}/shops/${job.slug}/settings/export/${token}`;
		const rows = manifest.tables.reduce((n, t) => n + t.rows, 0);
		const mail = renderEmail({
			subject: `Your export of ${job.name} is ready — Datumkeep`,
			paragraphs: [
				`Hello ${job.user_name},`,
				`The export of ${job.name} you asked for is ready: ${manifest.tables.length} tables, ${rows} rows, as CSV files with a manifest (manifest.json) in one zip archive.`,
				`The link works for ${EXPORT_LINK_DAYS} days, and only for an owner of the shop who is signed in.`
			],
			action: { label: 'Download the export', url }
		});
		await sendEmail(knex, {
			to: job.email,
			...mail,
			kind: 'shop.export-ready',
			shopId: shop.id,
			dedupeKey: `export:${exportId}:ready`
		});
		return 'done';
	} catch (e) {
		await rm(path, { force: true });
		await knex('public.shop_exports')
			.where({ id: exportId })
			.update({ status: 'failed', error: (e as Error).message.slice(0, 500) });
		throw e;
	}
}

async function writeArchive(
	knex: Knex,
	shop: ShopRef,
	info: { name: string; slug: string; time_zone: string },
	path: string,
	onProgress: (pct: number) => Promise<void> | void,
	exportId: number
): Promise<ExportManifest> {
	const zip = new ZipArchive({ zlib: { level: 6 } });
	const out = createWriteStream(path);
	const closed = new Promise<void>((ok, fail) => {
		out.on('close', ok);
		out.on('error', fail);
		zip.on('error', fail);
	});
	zip.pipe(out);
	const manifest: ExportManifest = {
		format: 'datumkeep-export',
		version: 1,
		shop: { name: info.name, slug: info.slug, timeZone: info.time_zone },
		generatedAt: new Date().toISOString(),
		notes: [
			'One CSV file per table, with a header row; the rows of all files were read at one instant.',
			'Empty cells are empty (NULL) values; times are UTC in ISO 8601; JSON columns hold JSON text.',
			'Lengths are in the units of their machine (machines.units).'
		],
		tables: []
	};
	// Every file from one snapshot: repeatable read, read only, set as the transaction begins.
	await withShop(
		shop,
		async (trx) => {
			const tables: string[] = (
				await trx.raw(
					`select table_name from information_schema.tables
				where table_schema = ? and table_type = 'BASE TABLE' order by table_name`,
					[shop.schemaName]
				)
			).rows
				.map((r: { table_name: string }) => r.table_name)
				.filter((t: string) => !SKIPPED.has(t));
			for (const [i, table] of tables.entries()) {
				const columns: string[] = (
					await trx.raw(
						`select column_name from information_schema.columns
					where table_schema = ? and table_name = ? order by ordinal_position`,
						[shop.schemaName, table]
					)
				).rows.map((r: { column_name: string }) => r.column_name);
				const parts: string[] = [stringify([columns])];
				let rows = 0;
				await trx.raw(`declare export_rows no scroll cursor for select * from ??`, [table]);
				for (;;) {
					const batch = (await trx.raw(`fetch ${BATCH} from export_rows`)).rows as Record<
						string,
						unknown
					>[];
					if (batch.length === 0) break;
					rows += batch.length;
					parts.push(stringify(batch.map((r) => columns.map((c) => cell(r[c])))));
				}
				await trx.raw('close export_rows');
				zip.append(parts.join(''), { name: `${table}.csv` });
				manifest.tables.push({ table, file: `${table}.csv`, columns, rows });
				const pct = Math.floor(((i + 1) / tables.length) * 95);
				await knex('public.shop_exports').where({ id: exportId }).update({ progress: pct });
				await onProgress(pct);
			}
		},
		undefined,
		{ isolationLevel: 'repeatable read', readOnly: true }
	);
	zip.append(JSON.stringify(manifest, null, 2), { name: 'manifest.json' });
	await zip.finalize();
	await closed;
	return manifest;
}
