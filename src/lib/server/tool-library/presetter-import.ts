/**
 * Presetter CSV imports into the tool library: the shop's column mapping (each save a new row)
 * and the all-or-nothing import of a presetter's export. `trx` is always a shop transaction.
 */
import type { Knex } from 'knex';
import type { PresetterMapping } from '$lib/schemas/tool-library';
import type { Actor } from '../actor';
import { audit } from '../audit';
import { isUniqueViolation } from '../db/errors';
import { measurementRow } from './library';
import { parsePresetterCsv, type PresetterRow } from './presetter-csv';

/** The shop's presetter CSV mapping (the newest saved), or null before the first one. */
export async function currentMapping(trx: Knex.Transaction): Promise<PresetterMapping | null> {
	const r = await trx('presetter_mappings').orderBy('id', 'desc').first();
	if (!r) return null;
	return {
		...(r.columns as Omit<PresetterMapping, 'units' | 'decimalSeparator' | 'delimiter'>),
		units: r.units,
		decimalSeparator: r.decimal_separator,
		delimiter: r.delimiter
	};
}

/** Saves the mapping as a new row (earlier ones stay, for the record of past imports). */
export async function saveMapping(
	trx: Knex.Transaction,
	m: PresetterMapping,
	by: Actor
): Promise<void> {
	const { units, decimalSeparator, delimiter, ...columns } = m;
	await trx('presetter_mappings').insert({
		columns: JSON.stringify(columns),
		units,
		decimal_separator: decimalSeparator,
		delimiter,
		created_by: by.id
	});
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		ip: by.ip,
		action: 'presetter.mapping-saved',
		target: 'presetter CSV',
		detail: { ...columns, units, decimalSeparator, delimiter }
	});
}

export const NO_MAPPING =
	'Map the presetter’s columns first (Tool library → Import from a presetter): which column holds the assembly name, the gauge length and so on, and the file’s units and decimal separator.';

export type ImportResult =
	| { ok: true; preview: true; rows: PresetterRow[]; mapping: PresetterMapping }
	| { ok: true; preview: false; imported: number; created: number; importId: number }
	| { ok: false; message: string; rows?: PresetterRow[]; mapping?: PresetterMapping };

/**
 * Checks every row of a presetter CSV with the stored mapping; with `preview` answers the rows,
 * otherwise imports — all rows or none: one row with an error and nothing is written.
 */
export async function importPresetterCsv(
	trx: Knex.Transaction,
	text: string,
	opts: { fileName: string; preview: boolean; timeZone: string; now?: Date },
	by: Actor
): Promise<ImportResult> {
	const mapping = await currentMapping(trx);
	if (!mapping) return { ok: false, message: NO_MAPPING };
	const names = await trx('tool_assemblies').select('id', 'name');
	const existing = new Map(names.map((r) => [String(r.name).toLowerCase(), Number(r.id)]));
	const parsed = parsePresetterCsv(text, mapping, existing, {
		timeZone: opts.timeZone,
		now: opts.now
	});
	if (!parsed.ok) return { ok: false, message: parsed.message };
	if (opts.preview) return { ok: true, preview: true, rows: parsed.rows, mapping };
	const bad = parsed.rows.filter((r) => r.errors.length > 0);
	if (bad.length > 0)
		return {
			ok: false,
			message: `${bad.length} of ${parsed.rows.length} row(s) have errors, so nothing was imported. Correct the file and import it again.`,
			rows: parsed.rows,
			mapping
		};
	let importId = 0;
	let created = 0;
	try {
		// A savepoint: a parallel import or form that added one of these names first (the
		// unique index decides) leaves this import with nothing written, and it says so.
		await trx.transaction(async (sp) => {
			const [imp] = await sp('presetter_imports')
				.insert({
					file_name: opts.fileName,
					row_count: parsed.rows.length,
					settings: JSON.stringify(mapping),
					imported_by: by.id
				})
				.returning('id');
			importId = Number(imp.id);
			for (const r of parsed.rows) {
				const m = r.measurement!;
				let assemblyId = r.assemblyId;
				if (assemblyId === null) {
					const [a] = await sp('tool_assemblies')
						.insert({
							name: m.name,
							holder: m.holder,
							cutter: m.cutter,
							stick_out: m.stickOut,
							units: mapping.units,
							created_by: by.id
						})
						.returning('id');
					assemblyId = Number(a.id);
					created++;
				}
				await sp('assembly_measurements').insert(
					measurementRow(
						assemblyId,
						{ ...m, units: mapping.units, note: '', radius: m.radius ?? undefined },
						new Date(m.measuredAt),
						by,
						'csv',
						importId
					)
				);
			}
		});
	} catch (e) {
		if (!isUniqueViolation(e, 'tool_assemblies_name_key')) throw e;
		return {
			ok: false,
			message:
				'Another import or person added an assembly of the same name at the same moment, so nothing from this file was imported. Look at the library, then import the file again.'
		};
	}
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		ip: by.ip,
		action: 'presetter.imported',
		target: opts.fileName || 'presetter CSV',
		detail: { importId, rows: parsed.rows.length, newAssemblies: created }
	});
	return { ok: true, preview: false, imported: parsed.rows.length, created, importId };
}
