import { parse } from 'csv-parse/sync';
import { stringify } from 'csv-stringify/sync';
import { numberOrBlank, toolFormSchema } from '$lib/schemas/tool';

/** Columns of the tool table CSV; the first three are required on import. */
export const TOOL_CSV_COLUMNS = [
	't',
	'h',
	'description',
	'holder',
	'stickout',
	'nominal_length'
] as const;
const REQUIRED = ['t', 'h', 'description'] as const;
export const TOOL_CSV_MAX_BYTES = 256 * 1024;
export const TOOL_CSV_MAX_ROWS = 2000;

export interface ParsedToolRow {
	/** Row number as a spreadsheet shows it (the header is row 1). */
	row: number;
	values: Record<string, string>;
	tool?: {
		t: number;
		h: number;
		description: string;
		holder: string;
		stickout: number | null;
		nominalLength: number | null;
	};
	errors: { column: string; value: string; message: string }[];
}

export type ToolCsvResult = { ok: true; rows: ParsedToolRow[] } | { ok: false; message: string };

const FIELD_COLUMN: Record<string, string> = {
	t: 't',
	h: 'h',
	description: 'description',
	holder: 'holder',
	stickout: 'stickout',
	nominalLength: 'nominal_length'
};

/**
 * Reads a tool table CSV and checks every row, without writing anything: each error names the
 * row, the column and the value. `existingT` are T numbers already in the rack (a T number is
 * one tool pocket, so a clash is an error); clashes inside the file are reported too. An H number
 * is one tool length offset register: two tools sharing one would share a length, so an H already
 * in the rack or on another row is an error too.
 */
export function parseToolCsv(
	text: string,
	existingT: Set<number>,
	/** H numbers in use in the rack → the T number using each. */
	existingH: Map<number, number> = new Map()
): ToolCsvResult {
	if (Buffer.byteLength(text) > TOOL_CSV_MAX_BYTES) {
		return {
			ok: false,
			message: `The file is larger than ${TOOL_CSV_MAX_BYTES / 1024} KB; split it.`
		};
	}
	let records: Record<string, string>[];
	try {
		records = parse(text.replace(/^\uFEFF/, ''), {
			columns: (header: string[]) => header.map((h) => h.trim().toLowerCase().replace(/\s+/g, '_')),
			skip_empty_lines: true,
			trim: true,
			relax_column_count: false
		});
	} catch (e) {
		return { ok: false, message: `The file is not readable as CSV: ${(e as Error).message}` };
	}
	if (records.length === 0)
		return { ok: false, message: 'The file has a header but no tool rows.' };
	if (records.length > TOOL_CSV_MAX_ROWS)
		return {
			ok: false,
			message: `The file has ${records.length} rows; at most ${TOOL_CSV_MAX_ROWS} at a time.`
		};
	const missing = REQUIRED.filter((c) => !(c in records[0]));
	if (missing.length > 0) {
		return {
			ok: false,
			message: `Missing column${missing.length > 1 ? 's' : ''}: ${missing.join(', ')}. The header row must name at least ${REQUIRED.join(', ')} (optional: holder, stickout, nominal_length).`
		};
	}
	const seenT = new Map<number, number>();
	const seenH = new Map<number, { row: number; t: number }>();
	return {
		ok: true,
		rows: records.map((values, i) => {
			const row = i + 2;
			const parsed = toolFormSchema.safeParse({
				t: numberOrBlank(values.t),
				h: numberOrBlank(values.h),
				description: values.description,
				holder: values.holder ?? '',
				stickout: numberOrBlank(values.stickout),
				nominalLength: numberOrBlank(values.nominal_length)
			});
			const errors: ParsedToolRow['errors'] = [];
			if (!parsed.success) {
				for (const issue of parsed.error.issues) {
					const column = FIELD_COLUMN[String(issue.path[0])] ?? String(issue.path[0]);
					errors.push({ column, value: values[column] ?? '', message: issue.message });
				}
				return { row, values, errors };
			}
			const d = parsed.data;
			if (existingT.has(d.t))
				errors.push({
					column: 't',
					value: values.t,
					message: `T${d.t} is already in this machine's rack.`
				});
			const earlier = seenT.get(d.t);
			if (earlier)
				errors.push({
					column: 't',
					value: values.t,
					message: `T${d.t} is also on row ${earlier}.`
				});
			seenT.set(d.t, row);
			const usedBy = existingH.get(d.h);
			if (usedBy !== undefined)
				errors.push({
					column: 'h',
					value: values.h,
					message: `H${d.h} is already the length offset of T${usedBy} in this rack; two tools cannot share one H number.`
				});
			const earlierH = seenH.get(d.h);
			if (earlierH)
				errors.push({
					column: 'h',
					value: values.h,
					message: `H${d.h} is also on row ${earlierH.row} (T${earlierH.t}); two tools cannot share one H number.`
				});
			else seenH.set(d.h, { row, t: d.t });
			return {
				row,
				values,
				errors,
				tool: {
					t: d.t,
					h: d.h,
					description: d.description,
					holder: d.holder,
					stickout: d.stickout ?? null,
					nominalLength: d.nominalLength ?? null
				}
			};
		})
	};
}

export interface ToolExportRow {
	t: number;
	h: number;
	description: string;
	holder: string;
	stickout: number | null;
	nominalLength: number | null;
	offset: string;
	units: string;
	measuredAt: string;
}

/** The rack as CSV: the import columns first (so an export can be imported elsewhere), then the current offsets. */
export function toolsToCsv(rows: ToolExportRow[]): string {
	return stringify(
		rows.map((r) => [
			r.t,
			r.h,
			r.description,
			r.holder,
			r.stickout ?? '',
			r.nominalLength ?? '',
			r.offset,
			r.units,
			r.measuredAt
		]),
		{ header: true, columns: [...TOOL_CSV_COLUMNS, 'offset', 'units', 'measured_at'] }
	);
}
