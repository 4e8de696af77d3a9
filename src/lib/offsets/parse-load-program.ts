/**
 * One reader for G10 offset files, in two modes:
 * - `parseLoadProgram`: reads back a load program, so what was written can be checked:
 *   parseLoadProgram(loadProgram(m, t)) equals t for a table at the machine's resolution. It
 *   reads only what loadProgram writes (plus free spacing and comments) and refuses anything
 *   else with the line number, rather than guess what a control would do.
 * - `parseControlFile`: reads the offset file a control saves (a read-back). It reads the same
 *   forms and the usual variants around them (X/Y words, wear, extended work offsets, N and O
 *   numbers, no G90, values without a decimal point), reads each value as the machine's control
 *   style would, flags every value written without a decimal point, and lists what it could not
 *   read instead of refusing the whole file.
 */
import { CONVENTIONS, type Convention } from './conventions';
import { OffsetInputError, type OffsetIssue } from './errors';
import { canonicalH, STANDARD_WORK_REGISTERS, MAX_EXTENDED_REGISTER } from './registers';
import { normalizeTable, parseMachine } from './table';
import type { ControlStyle, Machine, OffsetTable } from './types';
import {
	DEFAULT_RESOLUTION,
	fromIncrements,
	resolutionFor,
	roundToResolution,
	toUnits,
	type Units
} from './units';

interface Word {
	letter: string;
	text: string;
}

function words(code: string): Word[] | null {
	const compact = code.replace(/\s+/g, '').toUpperCase();
	const out: Word[] = [];
	const re = /([A-Z])([-+]?(?:\d+\.?\d*|\.\d+))/gy;
	let m: RegExpExecArray | null;
	let end = 0;
	while ((m = re.exec(compact)) !== null) {
		out.push({ letter: m[1], text: m[2] });
		end = re.lastIndex;
	}
	return end === compact.length ? out : null;
}

/**
 * Which register a value of a control file belongs to. `wear` holds length wear by H number;
 * `x`/`y` a work offset's X/Y, `radius`/`radius-wear` the H/D number's radius (or diameter)
 * geometry and wear (issue 20).
 */
export type ReadbackSection = 'work' | 'tools' | 'wear' | 'x' | 'y' | 'radius' | 'radius-wear';

/** A value the file wrote without a decimal point, and how the other convention would read it. */
export interface NoPointFlag {
	section: ReadbackSection;
	/** Canonical register: "G54", "G54.1 P3", or the H number ("3"). */
	register: string;
	line: number;
	/** As written, e.g. "-14205". */
	text: string;
	/** As this machine's control style reads it (machine units). */
	value: number;
	/** As the other convention would read it (machine units). */
	otherReading: number;
	/** 'increments' (ISO-style default) or 'whole units' (RS274NGC-style). */
	readAs: 'increments' | 'whole units';
}

/** A register the file sets that Datumkeep does not keep (G59.1, P0, G54.1 P beyond the range). */
export interface OtherRegister {
	line: number;
	label: string;
	value: number;
}

/** What a control's offset file holds, in the machine's units. */
export interface ControlFile {
	/** Units the file was written in (G20/G21, else the machine's). */
	fileUnits: Units;
	/** Units of every value below: the machine's. */
	units: Units;
	work: Record<string, number>;
	tools: Record<string, number>;
	/** Length wear by H number (ISO-style G10 L11), where the file has it. */
	wear: Record<string, number>;
	/** X/Y of work offsets (the X and Y words of G10 L2 / L20), where the file has them. */
	xy: Record<string, { x?: number; y?: number }>;
	/** Radius (or diameter) geometry by H/D number: ISO-style G10 L12, RS274NGC-style L1 R. */
	radius: Record<string, number>;
	/** Radius (or diameter) wear by H/D number: ISO-style G10 L13. */
	radiusWear: Record<string, number>;
	noPoint: NoPointFlag[];
	other: OtherRegister[];
	/** File-level remarks in plain words (assumed units, axes left out…). */
	notes: string[];
	/** Lines that could not be read, with why; the rest of the file was still read. */
	skipped: OffsetIssue[];
}

type Mode = 'load-program' | 'control-file';

interface ReadState {
	units?: Units;
	convention?: Convention;
	masterTool?: string;
	style?: ControlStyle;
	work: Record<string, number>;
	tools: Record<string, number>;
	wear: Record<string, number>;
	/** Load programs only (issue 20): X/Y of work offsets, radius geometry and wear by H/D. */
	xy: Record<string, { x?: number; y?: number }>;
	radius: Record<string, number>;
	radiusWear: Record<string, number>;
	cutter?: 'radius' | 'diameter';
	/** Value text and line per register, kept to flag values without a decimal point at the end. */
	raw: { section: ReadbackSection; register: string; text: string; line: number }[];
	other: OtherRegister[];
	notes: Set<string>;
	issues: OffsetIssue[];
}

const EXTENDED_LABEL = (p: number) => `G54.1 P${p}`;

/** The shared line reader behind both entry points. */
function readG10(text: string, mode: Mode, m: Machine | undefined): ReadState {
	const lenient = mode === 'control-file';
	const s: ReadState = {
		style: m?.controlStyle ?? (lenient ? 'rs274ngc' : undefined),
		work: {},
		tools: {},
		wear: {},
		xy: {},
		radius: {},
		radiusWear: {},
		raw: [],
		other: [],
		notes: new Set(),
		issues: []
	};
	let styleFromMachine = m?.controlStyle !== undefined || lenient;
	let absolute = lenient; // a saved offset file seldom says G90; controls start in G90
	const fail = (n: number, value: unknown, message: string) =>
		s.issues.push({ field: `line ${n}`, value, message });
	const setStyle = (n: number, st: ControlStyle, line: string) => {
		if (s.style !== undefined && s.style !== st) {
			fail(
				n,
				line,
				styleFromMachine
					? `is ${st === 'iso' ? 'ISO' : 'RS274NGC'}-style, but the machine is set to the other style`
					: 'mixes RS274NGC-style and ISO-style G10 forms'
			);
			return false;
		}
		s.style = st;
		styleFromMachine = false;
		return true;
	};

	text.split(/\r\n|\r|\n/).forEach((raw, index) => {
		const n = index + 1;
		const comments = [...raw.matchAll(/\(([^)]*)\)/g)].map((c) => c[1].trim().toUpperCase());
		for (const c of comments) {
			const conv = /^CONVENTION\s+([A-Z-]+)$/.exec(c);
			if (conv) {
				const value = conv[1].toLowerCase() as Convention;
				if (CONVENTIONS.includes(value)) s.convention = value;
				else if (!lenient) fail(n, conv[1], 'names an unknown convention');
			}
			const master = /^MASTER TOOL\s+H?(\d+)$/.exec(c);
			if (master) s.masterTool = canonicalH(master[1]) ?? undefined;
			const cutter = /^CUTTER REGISTERS\s+(RADIUS|DIAMETER)$/.exec(c);
			if (cutter) s.cutter = cutter[1] === 'DIAMETER' ? 'diameter' : 'radius';
		}
		let code = raw
			.replace(/\([^)]*\)/g, '')
			.replace(/;.*$/, '')
			.trim();
		if (code === '' || code === '%') return;
		if (/^O\d+$/i.test(code)) return;
		if (lenient) {
			// Block delete, sequence numbers, program numbers and a closing % are no offsets.
			code = code
				.replace(/^\//, '')
				.replace(/^O\d+\s*/i, '')
				.replace(/^N\d+\s*/i, '')
				.replace(/%\s*$/, '')
				.trim();
			if (code === '') return;
		}
		const ws = words(code);
		if (ws === null) return fail(n, raw, 'cannot be read as G-code words');
		const g = ws.filter((w) => w.letter === 'G').map((w) => Number(w.text));
		if (g.includes(10)) {
			if (lenient) {
				for (const w of ws) {
					if (w.letter !== 'G') continue;
					const code = Number(w.text);
					if (code === 90) absolute = true;
					else if (code === 91) absolute = false;
					else if (code === 20 || code === 21) {
						const u: Units = code === 20 ? 'inch' : 'mm';
						if (s.units !== undefined && s.units !== u)
							return fail(n, raw, 'changes units part way through the file');
						s.units = u;
					}
				}
			}
			if (!s.units) {
				if (!lenient)
					return fail(n, raw, 'comes before G20 or G21: the unit of the value is unknown');
				s.units = m!.units;
				s.notes.add(
					`The file does not say G20 or G21: its values were read in the machine's units (${m!.units}).`
				);
			}
			if (!absolute)
				return fail(
					n,
					raw,
					lenient
						? 'is under G91: the value would be added to the offset, so what the register holds cannot be read from it'
						: 'comes before G90: under G91 an ISO-style G10 adds to the offset instead of replacing it'
				);
			const l = ws.find((w) => w.letter === 'L')?.text;
			const pText = ws.find((w) => w.letter === 'P')?.text;
			const p = pText === undefined ? NaN : Number(pText);
			if (!Number.isInteger(p)) return fail(n, pText, 'P must be a whole number');
			const zWord = ws.find((w) => w.letter === 'Z');
			const rWord = ws.find((w) => w.letter === 'R');
			if (lenient) {
				const others = ws.filter((w) => !'GLPZRXY'.includes(w.letter));
				if (others.length > 0)
					s.notes.add(
						'Only Z, X, Y, tool lengths, radii and wear are compared: other axes in the file are left out.'
					);
				if (readControlComponents(n, raw, ws, l, p, s, m)) return;
			}
			if (!lenient) {
				const done = readComponents(n, raw, ws, l, p, s, m, fail, setStyle);
				if (done) return;
			}
			const valueWord = lenient
				? l === '2' || l === '20' || l === '1'
					? zWord
					: rWord
				: (zWord ?? rWord);
			if (!valueWord) {
				if (lenient) return; // e.g. G10 L2 P1 X0 Y0: nothing for Z
				return fail(n, raw, 'has no Z or R value');
			}
			if (!lenient && !valueWord.text.includes('.'))
				return fail(
					n,
					valueWord.text,
					'has no decimal point; some controls read such a number as increments, so load programs always write one'
				);
			const value = readValue(valueWord.text, s.style ?? 'rs274ngc', s.units, m);
			const put = (section: 'work' | 'tools' | 'wear', register: string, label: string) => {
				const target = s[section];
				if (register in target) {
					if (!lenient) return fail(n, raw, `sets ${label} a second time`);
					s.notes.add(`${label} is set more than once in the file: the last value counts.`);
					s.raw = s.raw.filter((r) => !(r.section === section && r.register === register));
				}
				target[register] = value;
				s.raw.push({ section, register, text: valueWord.text, line: n });
			};
			const setWork = (register: string) => {
				if (valueWord.letter !== 'Z') return fail(n, raw, 'a work offset is written with Z');
				put('work', register, register);
			};
			const setTool = (section: 'tools' | 'wear') => {
				const h = canonicalH(String(p));
				if (h === null) return fail(n, p, 'is not a valid H number (1–9999)');
				put(section, h, section === 'wear' ? `H${h} wear` : `H${h}`);
			};
			if (l === '2') {
				if (p >= 1 && p <= 6) return setWork(STANDARD_WORK_REGISTERS[p - 1]);
				if (lenient) {
					const label =
						p === 0
							? 'G10 L2 P0 (the active or common work offset)'
							: s.style === 'rs274ngc' && p >= 7 && p <= 9
								? `G59.${p - 6}`
								: `G10 L2 P${p}`;
					s.other.push({ line: n, label, value });
					return;
				}
				return fail(
					n,
					raw,
					'G10 L2 P must be 1–6 (G54–G59); P0 (the active system) and G59.1–G59.3 are not used in load programs'
				);
			}
			if (l === '1') {
				if (!setStyle(n, 'rs274ngc', raw)) return;
				if (valueWord.letter !== 'Z')
					return fail(n, raw, 'RS274NGC-style G10 L1 writes the length with Z');
				return setTool('tools');
			}
			if (lenient && s.style === 'rs274ngc' && (l === '10' || l === '11' || l === '20'))
				return fail(
					n,
					raw,
					`on an RS274NGC-style control G10 L${l} sets an offset from where the machine stands, not a stored value, so it cannot be read back`
				);
			if (l === '10') {
				if (!setStyle(n, 'iso', raw)) return;
				if (valueWord.letter !== 'R')
					return fail(n, raw, 'ISO-style G10 L10 writes the length with R');
				return setTool('tools');
			}
			if (lenient && l === '11') return setTool('wear');
			if (l === '20') {
				if (!setStyle(n, 'iso', raw)) return;
				const has = lenient
					? (m?.extendedWorkOffsets ?? MAX_EXTENDED_REGISTER)
					: MAX_EXTENDED_REGISTER;
				if (p < 1 || p > has) {
					if (lenient) {
						s.other.push({
							line: n,
							label: `${m?.extendedAddress ?? 'G54.1 P'}${p} (the machine is set to ${has} extended work offsets)`,
							value
						});
						return;
					}
					return fail(n, p, `G10 L20 P must be 1–${MAX_EXTENDED_REGISTER} (G54.1 P1–P48)`);
				}
				return setWork(EXTENDED_LABEL(p));
			}
			return fail(
				n,
				raw,
				`G10 L${l ?? '?'} is not a form ${lenient ? 'of offset file Datumkeep reads' : 'a load program uses'}`
			);
		}
		for (const w of ws) {
			if (w.letter === 'G' && (w.text === '20' || w.text === '21')) {
				const u: Units = w.text === '20' ? 'inch' : 'mm';
				if (s.units !== undefined && s.units !== u)
					return fail(n, raw, 'changes units part way through');
				s.units = u;
			} else if (w.letter === 'G' && Number(w.text) === 90) absolute = true;
			else if (w.letter === 'G' && Number(w.text) === 91) {
				if (lenient) absolute = false;
				else
					return fail(
						n,
						raw,
						'G91 would make ISO-style G10 add to offsets; load programs run in G90'
					);
			} else if (w.letter === 'M' && ['30', '2', '02', '99'].includes(w.text)) continue;
			else if (lenient && (w.letter === 'N' || w.letter === 'O')) continue;
			else if (lenient) return fail(n, raw, `${w.letter}${w.text} is not an offset: line left out`);
			else return fail(n, raw, `${w.letter}${w.text} is not part of a load program`);
		}
	});
	return s;
}

/**
 * The component words of a load program line (issue 20), read in load-program mode only: X/Y
 * on a work offset line, R beside Z on an RS274NGC-style G10 L1 (the radius), and ISO-style
 * G10 L11 (length wear), L12 (radius or diameter geometry) and L13 (its wear). Returns true
 * when the line is fully read here (or refused); false to let the Z/length reader go on.
 */
function readComponents(
	n: number,
	raw: string,
	ws: Word[],
	l: string | undefined,
	p: number,
	s: ReadState,
	m: Machine | undefined,
	fail: (n: number, value: unknown, message: string) => void,
	setStyle: (n: number, st: ControlStyle, line: string) => boolean
): boolean {
	const xw = ws.find((w) => w.letter === 'X');
	const yw = ws.find((w) => w.letter === 'Y');
	const zw = ws.find((w) => w.letter === 'Z');
	const rw = ws.find((w) => w.letter === 'R');
	for (const w of [xw, yw, rw]) {
		if (w && !w.text.includes('.')) {
			fail(
				n,
				w.text,
				'has no decimal point; some controls read such a number as increments, so load programs always write one'
			);
			return true;
		}
	}
	const units = s.units!;
	const read = (w: Word) => readValue(w.text, s.style ?? 'rs274ngc', units, m);
	if (xw || yw) {
		if (l !== '2' && l !== '20') {
			fail(n, raw, 'X and Y are written only on work offset lines (G10 L2 or L20)');
			return true;
		}
		const register =
			l === '2' && p >= 1 && p <= 6
				? STANDARD_WORK_REGISTERS[p - 1]
				: l === '20' && p >= 1 && p <= MAX_EXTENDED_REGISTER
					? EXTENDED_LABEL(p)
					: null;
		if (register === null) return false; // the Z reader names what is wrong with P
		if (l === '20' && !setStyle(n, 'iso', raw)) return true;
		if (register in s.xy) {
			fail(n, raw, `sets ${register} X/Y a second time`);
			return true;
		}
		s.xy[register] = {
			...(xw ? { x: read(xw) } : {}),
			...(yw ? { y: read(yw) } : {})
		};
		return !zw; // with Z, the Z reader records Z as well
	}
	if (l === '1' && rw && zw) {
		const h = canonicalH(String(p));
		if (h !== null) s.radius[h] = read(rw);
		return false;
	}
	if (l === '11' || l === '12' || l === '13') {
		if (!setStyle(n, 'iso', raw)) return true;
		if (!rw || zw) {
			fail(n, raw, `ISO-style G10 L${l} writes the value with R`);
			return true;
		}
		const h = canonicalH(String(p));
		if (h === null) {
			fail(n, p, 'is not a valid H/D number (1–9999)');
			return true;
		}
		const target = l === '11' ? s.wear : l === '12' ? s.radius : s.radiusWear;
		if (h in target) {
			fail(n, raw, `sets register ${h} of G10 L${l} a second time`);
			return true;
		}
		target[h] = read(rw);
		return true;
	}
	return false;
}

/**
 * The component words of a control file line (issue 20), read in control-file mode: X/Y on a
 * work offset line (G10 L2 P1–P6, L20 Pn within the machine's count; NIST RS274NGC v3 §3.5.5
 * for L2 — only the axes given are set), R beside Z on an RS274NGC-style G10 L1 (the radius;
 * LinuxCNC manual, from memory), ISO-style G10 L12 (radius or diameter geometry) and L13 (its
 * wear) with R (ISO-style mill manual §1.2.10, SOURCES.md 3; common practice). A register set
 * twice: the last value counts, said in a note. Returns true when the line is fully read here.
 */
function readControlComponents(
	n: number,
	raw: string,
	ws: Word[],
	l: string | undefined,
	p: number,
	s: ReadState,
	m: Machine | undefined
): boolean {
	const units = s.units!;
	const put = (
		section: 'x' | 'y' | 'radius' | 'radius-wear',
		register: string,
		label: string,
		w: Word
	) => {
		const value = readValue(w.text, s.style ?? 'rs274ngc', units, m);
		const target =
			section === 'radius' ? s.radius : section === 'radius-wear' ? s.radiusWear : undefined;
		const had = target ? register in target : s.xy[register]?.[section as 'x' | 'y'] !== undefined;
		if (had) {
			s.notes.add(`${label} is set more than once in the file: the last value counts.`);
			s.raw = s.raw.filter((r) => !(r.section === section && r.register === register));
		}
		if (target) target[register] = value;
		else s.xy[register] = { ...s.xy[register], [section]: value };
		s.raw.push({ section, register, text: w.text, line: n });
	};
	if (l === '12' || l === '13') {
		const rw = ws.find((w) => w.letter === 'R');
		const h = canonicalH(String(p));
		if (!rw) {
			s.issues.push({ field: `line ${n}`, value: raw, message: `G10 L${l} has no R value` });
			return true;
		}
		if (h === null) {
			s.issues.push({
				field: `line ${n}`,
				value: p,
				message: 'is not a valid H/D number (1–9999)'
			});
			return true;
		}
		put(
			l === '12' ? 'radius' : 'radius-wear',
			h,
			`H${h} ${l === '12' ? 'radius' : 'radius wear'}`,
			rw
		);
		return true;
	}
	if (l === '1') {
		const rw = ws.find((w) => w.letter === 'R');
		const h = canonicalH(String(p));
		if (rw && h !== null) put('radius', h, `H${h} radius`, rw);
		return false; // Z (the length) is read by the Z reader
	}
	if (l === '2' || l === '20') {
		const register =
			l === '2' && p >= 1 && p <= 6
				? STANDARD_WORK_REGISTERS[p - 1]
				: l === '20' && p >= 1 && p <= (m?.extendedWorkOffsets ?? MAX_EXTENDED_REGISTER)
					? EXTENDED_LABEL(p)
					: null;
		if (register === null) return false; // the Z reader lists it as a register not kept
		for (const axis of ['X', 'Y'] as const) {
			const w = ws.find((x) => x.letter === axis);
			if (w) put(axis === 'X' ? 'x' : 'y', register, `${register} ${axis}`, w);
		}
	}
	return false;
}

/** What a load program carries beside the Z table (issue 20), in the program's units. */
export interface LoadProgramComponents {
	work: Record<string, { x?: number; y?: number }>;
	tools: Record<string, { radius?: number; lengthWear?: number; radiusWear?: number }>;
	cutterRegister?: 'radius' | 'diameter';
}

/**
 * Reads a load program back with its components: the Z table as `parseLoadProgram` gives it,
 * and the X/Y, radius and wear lines, so parseLoadProgramWithComponents(loadProgram(m, t,
 * { components })) gives back the same table and components.
 * @throws OffsetInputError naming the line, as parseLoadProgram
 */
export function parseLoadProgramWithComponents(
	text: string,
	machine?: Machine
): { table: OffsetTable; components: LoadProgramComponents } {
	const table = parseLoadProgram(text, machine);
	const m = machine === undefined ? undefined : parseMachine(machine);
	const s = readG10(text, 'load-program', m);
	const tools: LoadProgramComponents['tools'] = {};
	const put = (src: Record<string, number>, key: 'radius' | 'lengthWear' | 'radiusWear') => {
		for (const [h, v] of Object.entries(src)) tools[h] = { ...tools[h], [key]: v };
	};
	put(s.radius, 'radius');
	put(s.wear, 'lengthWear');
	put(s.radiusWear, 'radiusWear');
	return {
		table,
		components: {
			work: s.xy,
			tools,
			...(s.cutter ? { cutterRegister: s.cutter } : {})
		}
	};
}

/**
 * A value as the control reads it. With a decimal point: as written. Without one, by the
 * control style: ISO-style controls in their usual setting read it as a count of least input
 * increments (Z-14205 = -1.4205 in at 0.0001 in, -14.205 mm at 0.001 mm); RS274NGC-style
 * controls read every number as written, so Z-14205 is -14205 (NIST RS274NGC v3 number syntax).
 */
function readValue(
	text: string,
	style: ControlStyle,
	units: Units,
	m: Machine | undefined
): number {
	if (text.includes('.')) return Number(text);
	return style === 'iso' ? fromIncrements(Number(text), incrementFor(units, m)) : Number(text);
}

function incrementFor(units: Units, m: Machine | undefined): number {
	return m && m.units === units ? resolutionFor(units, m.resolution) : DEFAULT_RESOLUTION[units];
}

/**
 * Parses a load program into an OffsetTable. Units come from G20/G21; the convention and
 * master tool from the program's own comments, else from `machine`; the style from the G10
 * forms used (L1 → RS274NGC-style, L10/L20 → ISO-style), checked against `machine` if given.
 * @throws OffsetInputError naming the line (`line 12`) and why
 */
export function parseLoadProgram(text: string, machine?: Machine): OffsetTable {
	if (typeof text !== 'string')
		throw OffsetInputError.of('text', text, 'must be the text of a load program');
	const m = machine === undefined ? undefined : parseMachine(machine);
	const s = readG10(text, 'load-program', m);
	const issues = s.issues;
	const { units } = s;
	let { convention, masterTool } = s;
	if (!units && issues.length === 0)
		issues.push({
			field: 'text',
			value: undefined,
			message: 'has no G20 or G21, so the unit of every value is unknown'
		});
	convention ??= m?.convention;
	masterTool ??= m?.masterTool === undefined ? undefined : (canonicalH(m.masterTool) ?? undefined);
	if (!convention && issues.length === 0)
		issues.push({
			field: 'text',
			value: undefined,
			message: 'does not say its convention (no CONVENTION comment) and no machine was given'
		});
	if (m?.convention !== undefined && convention !== undefined && m.convention !== convention) {
		issues.push({
			field: 'text',
			value: convention,
			message: `is written for ${convention}, but the machine uses ${m.convention}`
		});
	}
	if (m !== undefined && units !== undefined && m.units !== units) {
		issues.push({
			field: 'text',
			value: units,
			message: `is in ${units}, but the machine works in ${m.units}`
		});
	}
	if (issues.length > 0) throw new OffsetInputError(issues);
	const table: OffsetTable = {
		convention: convention!,
		units: units!,
		work: s.work,
		tools: s.tools
	};
	if (masterTool !== undefined && convention === 'master-tool') table.masterTool = masterTool;
	return normalizeTable(table, 'program');
}

/** Largest control file we read (a full table of 9999 H numbers is well under this). */
export const MAX_CONTROL_FILE_CHARS = 2_000_000;

/**
 * Reads the offset file a control saved, as `machine`'s control reads it (its style decides
 * what a value without a decimal point means, its increment what one increment is). Values come
 * back in the machine's units, rounded to its increment; a file in the other unit is converted.
 * Lines it cannot read are listed in `skipped`, not fatal.
 * @throws OffsetInputError when the input is not text, too long, or holds no offset at all
 */
export function parseControlFile(text: string, machine: Machine): ControlFile {
	if (typeof text !== 'string')
		throw OffsetInputError.of('file', text, 'must be the text of an offset file');
	if (text.length > MAX_CONTROL_FILE_CHARS)
		throw OffsetInputError.of(
			'file',
			`${text.length} characters`,
			`is larger than an offset file can be (${MAX_CONTROL_FILE_CHARS} characters at most)`
		);
	const m = parseMachine(machine);
	const s = readG10(text, 'control-file', m);
	const fileUnits = s.units ?? m.units;
	const resolution = resolutionFor(m.units, m.resolution);
	const toMachine = (v: number) =>
		fileUnits === m.units
			? roundToResolution(v, resolution)
			: toUnits(v, fileUnits, m.units, resolution);
	const convert = (r: Record<string, number>) =>
		Object.fromEntries(Object.entries(r).map(([k, v]) => [k, toMachine(v)]));
	const style = s.style ?? 'rs274ngc';
	const noPoint: NoPointFlag[] = s.raw
		// X0 Y0 (a control's usual unset X/Y) reads as zero either way: not worth a flag.
		.filter(
			(r) =>
				!r.text.includes('.') &&
				!(['x', 'y', 'radius', 'radius-wear'].includes(r.section) && Number(r.text) === 0)
		)
		.map((r) => {
			const whole = Number(r.text);
			const increments = fromIncrements(whole, incrementFor(fileUnits, m));
			return {
				section: r.section,
				register: r.register,
				line: r.line,
				text: r.text,
				value: toMachine(style === 'iso' ? increments : whole),
				otherReading: toMachine(style === 'iso' ? whole : increments),
				readAs: style === 'iso' ? 'increments' : 'whole units'
			};
		});
	const found =
		Object.keys(s.work).length +
		Object.keys(s.tools).length +
		Object.keys(s.xy).length +
		Object.keys(s.radius).length +
		Object.keys(s.radiusWear).length;
	const wearCount = Object.keys(s.wear).length;
	if (found + wearCount + s.other.length === 0) {
		throw new OffsetInputError(
			s.issues.length > 0
				? s.issues
				: [{ field: 'file', value: undefined, message: 'holds no G10 work or tool offset' }]
		);
	}
	const notes = [...s.notes];
	if (fileUnits !== m.units)
		notes.push(
			`The file is in ${fileUnits} and the machine works in ${m.units}: values were converted exactly (1 in = 25.4 mm).`
		);
	return {
		fileUnits,
		units: m.units,
		work: convert(s.work),
		tools: convert(s.tools),
		wear: convert(s.wear),
		xy: Object.fromEntries(
			Object.entries(s.xy).map(([k, v]) => [
				k,
				{
					...(v.x === undefined ? {} : { x: toMachine(v.x) }),
					...(v.y === undefined ? {} : { y: toMachine(v.y) })
				}
			])
		),
		radius: convert(s.radius),
		radiusWear: convert(s.radiusWear),
		noPoint,
		other: s.other.map((o) => ({ ...o, value: toMachine(o.value) })),
		notes,
		skipped: s.issues
	};
}
