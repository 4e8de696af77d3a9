/**
 * Converting a whole table between conventions, and between units. A conversion only moves a
 * constant c between the two halves: every tool offset gains c and every work offset loses c,
 * so W_k + H_i (the spindle's machine Z at program Z0) is unchanged for every pair
 * (DESIGN.md §2). The conventions differ only in where that constant sits:
 *
 * | from → to                       | c                        | needs                       |
 * | reference-touch → gauge-length  | −R                       | referenceGaugeLineZ         |
 * | gauge-length → reference-touch  | +R                       | referenceGaugeLineZ         |
 * | any → master-tool (master m)    | −H_m                     | nothing (m is in the table) |
 * | master-tool → reference-touch   | +(R + L_m)               | masterTouchZ                |
 * | master-tool → gauge-length      | +(R + L_m) − R           | masterTouchZ and R          |
 */
import { CONVENTIONS, type Convention, type PhysicalGeometry } from './conventions';
import { OffsetInputError } from './errors';
import { canonicalH } from './registers';
import { conventionSchema, conversionGeometrySchema, unitsSchema } from './schemas';
import { normalizeTable } from './table';
import type { ConversionGeometry, OffsetTable } from './types';
import { fromMicro, toMicro, toUnits, type Units } from './units';
import { parseInput } from './validate';

function need(field: keyof ConversionGeometry, value: number | undefined, why: string): number {
	if (value === undefined) throw OffsetInputError.of(`geometry.${field}`, value, why);
	return toMicro(value, `geometry.${field}`);
}

function shifted(table: OffsetTable, to: Convention, c: number, masterTool?: string): OffsetTable {
	const work: Record<string, number> = {};
	const tools: Record<string, number> = {};
	for (const [r, w] of Object.entries(table.work)) work[r] = fromMicro(toMicro(w) - c);
	for (const [h, v] of Object.entries(table.tools)) tools[h] = fromMicro(toMicro(v) + c);
	const out: OffsetTable = { convention: to, units: table.units, work, tools };
	if (masterTool !== undefined) out.masterTool = masterTool;
	return out;
}

/** A master-tool table may omit its master (offset 0): write it in so it survives a conversion. */
function withMasterEntry(t: OffsetTable): OffsetTable {
	if (t.convention !== 'master-tool' || t.masterTool === undefined || t.masterTool in t.tools)
		return t;
	const tools = Object.fromEntries(
		Object.entries({ ...t.tools, [t.masterTool]: 0 }).sort(([a], [b]) => Number(a) - Number(b))
	);
	return { ...t, tools };
}

/**
 * Converts a table to another convention, keeping the spindle Z at program zero for every
 * (fixture, tool) pair. `geometry` (in the table's units) supplies what the maths needs:
 * `referenceGaugeLineZ` (R) to or from gauge-length, `masterTouchZ` (R + L_m) out of
 * master-tool, `masterTool` to choose the master going into master-tool (default: the
 * table's own, else the lowest H number).
 * @throws OffsetInputError naming the missing geometry field and why it is needed
 */
export function convertTable(
	table: OffsetTable,
	to: Convention,
	geometry: ConversionGeometry = {}
): OffsetTable {
	const t = withMasterEntry(normalizeTable(table));
	const target = parseInput(conventionSchema, to, 'to');
	const g = parseInput(conversionGeometrySchema, geometry ?? {}, 'geometry');
	const from = t.convention;

	if (target === 'master-tool') {
		const wanted = g.masterTool ?? t.masterTool ?? Object.keys(t.tools)[0];
		if (wanted === undefined) {
			throw OffsetInputError.of(
				'geometry.masterTool',
				undefined,
				'is needed: the table has no tool to be the master'
			);
		}
		const m = canonicalH(wanted)!;
		const hm = t.tools[m];
		// A master-tool table may leave its master out: its offset is 0 by definition.
		if (hm === undefined && !(from === 'master-tool' && m === t.masterTool)) {
			throw OffsetInputError.of(
				'geometry.masterTool',
				wanted,
				`has no offset in the table: H${m} must be measured to be the master`
			);
		}
		return shifted(t, target, -toMicro(hm ?? 0), m);
	}
	if (from === target) return shifted(t, target, 0);

	const rWhy = `is needed to convert ${from} to ${target}: touch a tool or probe of known length on the reference and record R = reading − setter height − length`;
	const mWhy = `is needed to convert master-tool to ${target}: touch the master tool (H${t.masterTool}) on the reference and record its gauge-line Z (minus any setter height)`;
	let c: number;
	if (from === 'reference-touch') c = -need('referenceGaugeLineZ', g.referenceGaugeLineZ, rWhy);
	else if (from === 'gauge-length') c = need('referenceGaugeLineZ', g.referenceGaugeLineZ, rWhy);
	else if (target === 'reference-touch') c = need('masterTouchZ', g.masterTouchZ, mWhy);
	else
		c =
			need('masterTouchZ', g.masterTouchZ, mWhy) -
			need('referenceGaugeLineZ', g.referenceGaugeLineZ, rWhy);
	return shifted(t, target, c);
}

/**
 * The same table in other units, each value rounded to the target's increment
 * (`resolution`, default 0.0001 in / 0.001 mm). inch → mm → inch returns every inch
 * increment unchanged, because 0.001 mm is finer than half of 0.0001 in; mm → inch → mm can
 * move a value by up to half of 0.0001 in (0.00127 mm).
 */
export function convertTableUnits(
	table: OffsetTable,
	units: Units,
	resolution?: number
): OffsetTable {
	const t = normalizeTable(table);
	const u = parseInput(unitsSchema, units, 'units');
	const step = resolution ?? 'control';
	const conv = (v: number) => toUnits(v, t.units, u, step);
	const work = Object.fromEntries(Object.entries(t.work).map(([k, v]) => [k, conv(v)]));
	const tools = Object.fromEntries(Object.entries(t.tools).map(([k, v]) => [k, conv(v)]));
	const out: OffsetTable = { convention: t.convention, units: u, work, tools };
	if (t.masterTool !== undefined) out.masterTool = t.masterTool;
	return out;
}

/**
 * Builds a table in any convention from the physical set-up (R, tool lengths, zero heights),
 * straight from the formulas of DESIGN.md §2. Handy for examples and for checking a table.
 */
export function tableFromGeometry(
	geometry: PhysicalGeometry,
	convention: Convention,
	units: Units
): OffsetTable {
	if (!CONVENTIONS.includes(convention))
		throw OffsetInputError.of('convention', convention, `must be one of ${CONVENTIONS.join(', ')}`);
	const r = toMicro(geometry.referenceGaugeLineZ, 'geometry.referenceGaugeLineZ');
	let lm = 0;
	let master: string | undefined;
	if (convention === 'master-tool') {
		master =
			geometry.masterTool === undefined
				? undefined
				: (canonicalH(geometry.masterTool) ?? undefined);
		const length = master === undefined ? undefined : geometry.toolLengths[master];
		if (master === undefined || length === undefined) {
			throw OffsetInputError.of(
				'geometry.masterTool',
				geometry.masterTool,
				'must name a tool in toolLengths for the master-tool convention'
			);
		}
		lm = toMicro(length);
	}
	const work: Record<string, number> = {};
	const tools: Record<string, number> = {};
	for (const [h, l] of Object.entries(geometry.toolLengths)) {
		const li = toMicro(l, `geometry.toolLengths.${h}`);
		tools[h] = fromMicro(
			convention === 'reference-touch' ? r + li : convention === 'gauge-length' ? li : li - lm
		);
	}
	for (const [k, hk] of Object.entries(geometry.zeroHeights)) {
		const h = toMicro(hk, `geometry.zeroHeights.${k}`);
		work[k] = fromMicro(
			convention === 'reference-touch' ? h : convention === 'gauge-length' ? r + h : r + h + lm
		);
	}
	return normalizeTable({
		convention,
		units,
		work,
		tools,
		...(master ? { masterTool: master } : {})
	});
}
