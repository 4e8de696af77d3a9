/**
 * The load program: a G10 program that writes a machine's Z offsets so nobody types them by
 * hand. Work offsets by `G10 L2 P1–P6` (G54–G59; NISTIR 6556 §3.5.5: G10 L2 sets the
 * system's origin in machine coordinates and only the axes given change — we give Z only).
 * Tool lengths in the machine's control style, labelled in our own words by the G10 form:
 * - 'rs274ngc', shown as "Tool table, G10 L1 (P tool, Z length)": `G10 L1 P<tool> Z<length>`;
 *   no G54.1 P registers (its L2 P7–P9 are G59.1–G59.3), so a table using them is refused.
 * - 'iso', shown as "Length registers, G10 L10 (P H number, R length)": `G10 L10 P<H> R<length>`
 *   (length geometry), and `G10 L20 P<n> Z…` for extended work offset n, up to the number the
 *   machine says it has. Under G91 these add, so we always write G90.
 */
import { OffsetInputError, type OffsetIssue } from './errors';
import { formatLength } from './format';
import {
	canonicalH,
	canonicalRegister,
	extendedNumber,
	STANDARD_WORK_REGISTERS
} from './registers';

/** Two spellings of one register ("g54" and "G54", "03" and "3"). */
function sameRegister(section: 'work' | 'tools', a: string, b: string): boolean {
	const canon = section === 'work' ? canonicalRegister : canonicalH;
	return (canon(a) ?? a) === (canon(b) ?? b);
}
import { loadProgramOptionsSchema } from './schemas';
import { machineName, normalizeTable, parseMachine, travelLimits } from './table';
import type { ControlStyle, Machine, OffsetTable } from './types';
import { convertTableUnits } from './convert';
import { resolutionFor, toMicro } from './units';
import { parseInput } from './validate';
import type { z } from 'zod';

/** Labels for the two control styles, for pickers and the program header. */
export const CONTROL_STYLE_LABEL: Readonly<Record<ControlStyle, string>> = {
	rs274ngc: 'Tool table, G10 L1 (P tool, Z length)',
	iso: 'Length registers, G10 L10 (P H number, R length)'
};

/** The cautions written at the top of every load program (our own words). */
export const LOAD_PROGRAM_CAUTIONS = [
	'CHECK EVERY VALUE ON THE CONTROL SCREEN BEFORE CUTTING',
	'FIRST RUN IN SINGLE BLOCK WITH RAPID AND FEED TURNED DOWN',
	'LIFT CLEAR IN Z BEFORE MOVING BETWEEN FIXTURES',
	'FOLLOW THE MACHINE BUILDER MANUAL AND YOUR SHOP PRACTICE',
	'ONLY Z IS WRITTEN - X AND Y OFFSETS STAY AS THEY ARE'
] as const;

/** Options of loadProgram. */
export type LoadProgramOptions = z.infer<typeof loadProgramOptionsSchema>;

/** Comment text safe on any control: upper case, no parentheses, plain characters. */
export function commentText(text: string): string {
	return text
		.toUpperCase()
		.replace(/[^A-Z0-9 .,:=+\-/#]/g, ' ')
		.replace(/\s+/g, ' ')
		.trim();
}

/** The G10 words that write one work register, or an issue when the style has no such form. */
function workWords(style: ControlStyle, register: string): string | null {
	const std = STANDARD_WORK_REGISTERS.indexOf(register as (typeof STANDARD_WORK_REGISTERS)[number]);
	if (std >= 0) return `G10 L2 P${std + 1}`;
	const n = extendedNumber(register);
	if (n !== null && style === 'iso') return `G10 L20 P${n}`;
	return null;
}

/**
 * Writes the load program for `table` on `machine`. Values are rounded to the machine's
 * resolution (half away from zero) and written with fixed decimals, always with a decimal
 * point (common shop practice: some controls read a number without one as increments).
 * A table in the other unit is converted to the machine's unit first.
 * @throws OffsetInputError when the table's convention differs from the machine's, a register
 *   has no form in the machine's control style, or a value is beyond the machine's Z travel
 */
export function loadProgram(
	machine: Machine,
	table: OffsetTable,
	options: LoadProgramOptions = {}
): string {
	const m = parseMachine(machine);
	let t = normalizeTable(table);
	const o = parseInput(loadProgramOptionsSchema, options ?? {}, 'options');
	const style: ControlStyle = m.controlStyle ?? 'rs274ngc';
	const resolution = resolutionFor(m.units, m.resolution);
	if (m.convention !== undefined && m.convention !== t.convention) {
		throw OffsetInputError.of(
			'table.convention',
			t.convention,
			`differs from ${machineName(m)}, which uses ${m.convention}: convert the table before loading it`
		);
	}
	const converted = t.units !== m.units;
	if (converted) t = convertTableUnits(t, m.units, resolution);
	if (t.convention === 'master-tool' && t.masterTool !== undefined && !(t.masterTool in t.tools)) {
		// write the master's 0 too, so the control cannot keep an old value there
		t = {
			...t,
			tools: Object.fromEntries(
				Object.entries({ ...t.tools, [t.masterTool]: 0 }).sort(([a], [b]) => Number(a) - Number(b))
			)
		};
	}

	// Withheld registers are not written at all (the gate's verdict; see ./gate.ts).
	const withheld = o.withheld ?? [];
	const isWithheld = (section: 'work' | 'tools', key: string) =>
		withheld.some((w) => w.section === section && sameRegister(section, w.register, key));
	const warningFor = (section: 'work' | 'tools', key: string) =>
		(o.warnings ?? []).find((w) => w.section === section && sameRegister(section, w.register, key));
	t = {
		...t,
		work: Object.fromEntries(Object.entries(t.work).filter(([k]) => !isWithheld('work', k))),
		tools: Object.fromEntries(Object.entries(t.tools).filter(([k]) => !isWithheld('tools', k)))
	};

	const { min, max } = travelLimits(m);
	const span = toMicro(max) - toMicro(min);
	const issues: OffsetIssue[] = [];
	const fmt = (v: number) => formatLength(v, m.units, resolution);
	const body: string[] = [];
	if (Object.keys(t.work).length > 0) body.push('(WORK OFFSETS Z)');
	for (const [register, value] of Object.entries(t.work)) {
		const words = workWords(style, register);
		if (words === null) {
			issues.push({
				field: `table.work.${register}`,
				value,
				message: `cannot be written for an ${CONTROL_STYLE_LABEL[style]} control: it has no G54.1 P registers (its G10 L2 P7–P9 are G59.1–G59.3). Use G54–G59 or set the machine to the G10 L10 length form.`
			});
			continue;
		}
		const extended = extendedNumber(register);
		if (
			extended !== null &&
			m.extendedWorkOffsets !== undefined &&
			extended > m.extendedWorkOffsets
		) {
			issues.push({
				field: `table.work.${register}`,
				value,
				message: `is beyond the ${m.extendedWorkOffsets} extended work offsets ${machineName(m)} is set to have`
			});
			continue;
		}
		if (Math.abs(toMicro(value)) > span)
			issues.push({
				field: `table.work.${register}`,
				value,
				message: `is beyond the Z travel of ${machineName(m)} (${fmt(max - min)} ${m.units})`
			});
		const warn = warningFor('work', register);
		if (warn) body.push(`(${commentText(`WARNING ${register} ${warn.reason}`)})`);
		body.push(`${words} Z${fmt(value)}`);
	}
	if (Object.keys(t.tools).length > 0) body.push('(TOOL LENGTH OFFSETS)');
	for (const [h, value] of Object.entries(t.tools)) {
		if (Math.abs(toMicro(value)) > span)
			issues.push({
				field: `table.tools.${h}`,
				value,
				message: `is beyond the Z travel of ${machineName(m)} (${fmt(max - min)} ${m.units})`
			});
		const warn = warningFor('tools', h);
		if (warn) body.push(`(${commentText(`WARNING H${h} ${warn.reason}`)})`);
		body.push(style === 'iso' ? `G10 L10 P${h} R${fmt(value)}` : `G10 L1 P${h} Z${fmt(value)}`);
	}
	if (issues.length > 0) throw new OffsetInputError(issues);

	const lines: string[] = [];
	const framed = o.percentFraming ?? true;
	if (framed) lines.push('%');
	if (o.programNumber !== undefined) lines.push(`O${String(o.programNumber).padStart(4, '0')}`);
	lines.push(`(${commentText(`DATUMKEEP LOAD PROGRAM ${o.title ?? m.name ?? ''}`)})`);
	lines.push(`(LENGTHS AS ${style === 'iso' ? 'G10 L10 P-H R-LENGTH' : 'G10 L1 P-TOOL Z-LENGTH'})`);
	lines.push(`(CONVENTION ${t.convention.toUpperCase()})`);
	if (t.convention === 'master-tool' && t.masterTool !== undefined)
		lines.push(`(MASTER TOOL H${t.masterTool})`);
	if (converted)
		lines.push(`(VALUES CONVERTED FROM ${table.units.toUpperCase()} TO ${m.units.toUpperCase()})`);
	for (const c of LOAD_PROGRAM_CAUTIONS) lines.push(`(${c})`);
	if (style === 'iso')
		lines.push('(WEAR VALUES ARE LEFT AS THEY ARE - CONFIRM EACH ONE ON THE CONTROL)');
	if (withheld.length > 0) {
		lines.push('(WITHHELD - NOT WRITTEN, THE CONTROL KEEPS ITS OLD VALUE:)');
		for (const w of withheld) {
			const label = w.section === 'tools' ? `H${canonicalH(w.register) ?? w.register}` : w.register;
			lines.push(`(${commentText(`WITHHELD ${label} ${w.reason}`)})`);
		}
	}
	lines.push(`${m.units === 'inch' ? 'G20' : 'G21'} G90`);
	lines.push(...body);
	lines.push('M30');
	if (framed) lines.push('%');
	return `${lines.join('\n')}\n`;
}
