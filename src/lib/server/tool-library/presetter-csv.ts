/**
 * Reads a presetter's CSV export with the shop's stored mapping and checks every row without
 * writing anything: each error names the row, the column, the value and why. A row whose name
 * is already in the library is a re-measure of that assembly; a new name is a new assembly.
 *
 * Decimal comma: the app's number reader refuses "25,4" everywhere, because a comma is ambiguous
 * when someone types it. Here the shop has said once, in the mapping, that its presetter writes
 * decimal commas, so a cell's comma is read as the decimal point — and a point in such a file is
 * refused, so a file that does not match the mapping never imports half-understood.
 */
import { parse } from 'csv-parse/sync';
import { numberTextMessage, readNumberText } from '$lib/offsets/number-text';
import { LENGTH_PLACES } from '$lib/schemas/number';
import {
	MAPPED_FIELDS,
	MAPPED_FIELD_LABEL,
	type MappedField,
	type PresetterMapping
} from '$lib/schemas/tool-library';
import { wallTimeToDate } from './wall-time';

export const PRESETTER_CSV_MAX_BYTES = 512 * 1024;
export const PRESETTER_CSV_MAX_ROWS = 2000;

export interface PresetterRowError {
	column: string;
	value: string;
	message: string;
}

export interface PresetterRow {
	/** Row number as a spreadsheet shows it (the header is row 1). */
	row: number;
	values: Record<string, string>;
	/** The assembly already in the library with this name (a re-measure), or null (new). */
	assemblyId: number | null;
	measurement?: {
		name: string;
		holder: string;
		cutter: string;
		stickOut: number | null;
		gaugeLength: number;
		radius: number | null;
		measuredAt: string;
		presetter: string;
	};
	errors: PresetterRowError[];
}

export type PresetterCsvResult =
	{ ok: true; rows: PresetterRow[]; headers: string[] } | { ok: false; message: string };

const DELIMITER = { comma: ',', semicolon: ';', tab: '\t' } as const;

/** A number cell read with the file's decimal separator; undefined for a blank cell. */
export function readCell(
	raw: string,
	label: string,
	sep: 'point' | 'comma'
): { ok: true; value: number | undefined } | { ok: false; message: string } {
	const t = raw.trim();
	if (t === '') return { ok: true, value: undefined };
	let text = t;
	if (sep === 'comma') {
		if (t.includes('.'))
			return {
				ok: false,
				message: `${label} "${t}" has a point, but this shop's presetter mapping says the file uses a decimal comma (25,4): check the value or change the mapping.`
			};
		if ((t.match(/,/g) ?? []).length > 1)
			return { ok: false, message: `${label} "${t}" has more than one comma.` };
		text = t.replace(',', '.');
	}
	const r = readNumberText(text);
	if (!r.ok) {
		const hint =
			sep === 'point' && t.includes(',')
				? ' If the presetter writes decimal commas (25,4), set the mapping’s decimal separator to comma.'
				: '';
		return { ok: false, message: numberTextMessage(label, t, r.reason) + hint };
	}
	if (r.places > LENGTH_PLACES)
		return {
			ok: false,
			message: `${label} "${t}" has ${r.places} decimals; lengths are kept to ${LENGTH_PLACES}.`
		};
	return { ok: true, value: r.value };
}

/**
 * @param existing library names (lower case) → assembly id
 * @param timeZone the shop's zone, for measured-at times without one
 */
export function parsePresetterCsv(
	text: string,
	mapping: PresetterMapping,
	existing: Map<string, number>,
	opts: { timeZone: string; now?: Date }
): PresetterCsvResult {
	if (Buffer.byteLength(text) > PRESETTER_CSV_MAX_BYTES)
		return {
			ok: false,
			message: `The file is larger than ${PRESETTER_CSV_MAX_BYTES / 1024} KB; split it.`
		};
	let records: string[][];
	try {
		records = parse(text.replace(/^\uFEFF/, ''), {
			delimiter: DELIMITER[mapping.delimiter],
			skip_empty_lines: true,
			trim: true,
			relax_column_count: false
		});
	} catch (e) {
		return {
			ok: false,
			message: `The file is not readable as CSV with ${mapping.delimiter}-separated columns: ${(e as Error).message}`
		};
	}
	if (records.length < 2) return { ok: false, message: 'The file has no rows below its header.' };
	if (records.length - 1 > PRESETTER_CSV_MAX_ROWS)
		return {
			ok: false,
			message: `The file has ${records.length - 1} rows; at most ${PRESETTER_CSV_MAX_ROWS} at a time.`
		};
	const headers = records[0];
	const index = new Map(headers.map((h, i) => [h.trim().toLowerCase(), i]));
	const mapped = MAPPED_FIELDS.filter((f) => mapping[f] !== '');
	const missing = mapped.filter((f) => !index.has(mapping[f].toLowerCase()));
	if (missing.length > 0)
		return {
			ok: false,
			message: `The header row has no column ${missing.map((f) => `"${mapping[f]}" (${MAPPED_FIELD_LABEL[f]})`).join(', ')}. Its columns are: ${headers.join(', ')}. Check the file or the mapping.`
		};
	const now = opts.now ?? new Date();
	const seen = new Map<string, number>();
	const rows = records.slice(1).map((cells, i): PresetterRow => {
		const row = i + 2;
		const values: Record<string, string> = {};
		for (const f of mapped) values[f] = cells[index.get(mapping[f].toLowerCase())!] ?? '';
		const errors: PresetterRowError[] = [];
		const err = (f: MappedField, message: string) =>
			errors.push({ column: mapping[f], value: values[f] ?? '', message });
		const num = (f: MappedField) => {
			if (!(f in values)) return undefined;
			const r = readCell(values[f], MAPPED_FIELD_LABEL[f], mapping.decimalSeparator);
			if (!r.ok) {
				err(f, r.message);
				return undefined;
			}
			return r.value;
		};

		const name = (values.name ?? '').trim();
		if (!name) err('name', 'Assembly name is empty: every row names the assembly it measured.');
		else if (name.length > 60) err('name', 'Assembly name is longer than 60 characters.');
		const earlier = seen.get(name.toLowerCase());
		if (name && earlier)
			err(
				'name',
				`Assembly "${name}" is also on row ${earlier}: one measurement per assembly per file.`
			);
		if (name) seen.set(name.toLowerCase(), row);

		const gaugeLength = num('gaugeLength');
		if (gaugeLength === undefined && !errors.some((e) => e.column === mapping.gaugeLength))
			err('gaugeLength', 'Gauge length is empty: it is what the presetter measured.');
		else if (gaugeLength !== undefined && gaugeLength <= 0)
			err(
				'gaugeLength',
				`Gauge length must be greater than zero (tip below the gauge line); got ${gaugeLength}.`
			);

		let radius = num('radius') ?? null;
		const diameter = num('diameter');
		if (diameter !== undefined) radius = Math.round((diameter / 2) * 1e6) / 1e6;
		if (radius !== null && radius < 0)
			err(diameter !== undefined ? 'diameter' : 'radius', 'Must be zero or more.');
		if (radius !== null && Math.round(radius * 1e4) / 1e4 !== radius)
			err('diameter', `Half of this diameter has more than ${LENGTH_PLACES} decimals.`);
		const stickOut = num('stickOut') ?? null;
		if (stickOut !== null && stickOut < 0) err('stickOut', 'Stick-out must be zero or more.');

		let measuredAt = now.toISOString();
		const whenText = (values.measuredAt ?? '').trim();
		if (whenText) {
			const at = wallTimeToDate(whenText, opts.timeZone);
			if (!at)
				err(
					'measuredAt',
					`Measured at "${whenText}" is not a date as 2026-12-03 or 2026-12-03 09:30 (the shop’s time zone).`
				);
			else if (at.getTime() > now.getTime() + 5 * 60_000)
				err('measuredAt', `Measured at "${whenText}" is in the future.`);
			else measuredAt = at.toISOString();
		}
		const holder = (values.holder ?? '').trim();
		const cutter = (values.cutter ?? '').trim();
		const presetter = (values.presetter ?? '').trim();
		for (const [f, v, max] of [
			['holder', holder, 120],
			['cutter', cutter, 120],
			['presetter', presetter, 80]
		] as const)
			if (v.length > max) err(f, `${MAPPED_FIELD_LABEL[f]} is longer than ${max} characters.`);

		const assemblyId = name ? (existing.get(name.toLowerCase()) ?? null) : null;
		if (errors.length > 0) return { row, values, assemblyId, errors };
		return {
			row,
			values,
			assemblyId,
			errors,
			measurement: {
				name,
				holder,
				cutter,
				stickOut,
				gaugeLength: gaugeLength!,
				radius,
				measuredAt,
				presetter
			}
		};
	});
	return { ok: true, rows, headers };
}
