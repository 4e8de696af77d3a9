/**
 * Reads a load program back into a table, so what was written can be checked:
 * parseLoadProgram(loadProgram(m, t)) equals t for a table at the machine's resolution.
 * It reads only what loadProgram writes (plus free spacing and comments) and refuses anything
 * else with the line number, rather than guess what a control would do.
 */
import { CONVENTIONS, type Convention } from './conventions';
import { OffsetInputError, type OffsetIssue } from './errors';
import { canonicalH, STANDARD_WORK_REGISTERS, MAX_EXTENDED_REGISTER } from './registers';
import { normalizeTable, parseMachine } from './table';
import type { ControlStyle, Machine, OffsetTable } from './types';
import type { Units } from './units';

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
 * Parses a load program into an OffsetTable. Units come from G20/G21; the convention and
 * master tool from the program's own comments, else from `machine`; the style from the G10
 * forms used (L1 → RS274NGC-style, L10/L20 → ISO-style), checked against `machine` if given.
 * @throws OffsetInputError naming the line (`line 12`) and why
 */
export function parseLoadProgram(text: string, machine?: Machine): OffsetTable {
	if (typeof text !== 'string')
		throw OffsetInputError.of('text', text, 'must be the text of a load program');
	const m = machine === undefined ? undefined : parseMachine(machine);
	const issues: OffsetIssue[] = [];
	let units: Units | undefined;
	let convention: Convention | undefined;
	let masterTool: string | undefined;
	let style: ControlStyle | undefined = m?.controlStyle;
	let styleFromMachine = m?.controlStyle !== undefined;
	let absolute = false;
	const work: Record<string, number> = {};
	const tools: Record<string, number> = {};
	const fail = (n: number, value: unknown, message: string) =>
		issues.push({ field: `line ${n}`, value, message });
	const setStyle = (n: number, s: ControlStyle, line: string) => {
		if (style !== undefined && style !== s) {
			fail(
				n,
				line,
				styleFromMachine
					? `is ${s === 'iso' ? 'ISO' : 'RS274NGC'}-style, but the machine is set to the other style`
					: 'mixes RS274NGC-style and ISO-style G10 forms'
			);
			return false;
		}
		style = s;
		styleFromMachine = false;
		return true;
	};

	text.split(/\r?\n/).forEach((raw, index) => {
		const n = index + 1;
		const comments = [...raw.matchAll(/\(([^)]*)\)/g)].map((c) => c[1].trim().toUpperCase());
		for (const c of comments) {
			const conv = /^CONVENTION\s+([A-Z-]+)$/.exec(c);
			if (conv) {
				const value = conv[1].toLowerCase() as Convention;
				if (CONVENTIONS.includes(value)) convention = value;
				else fail(n, conv[1], 'names an unknown convention');
			}
			const master = /^MASTER TOOL\s+H?(\d+)$/.exec(c);
			if (master) masterTool = canonicalH(master[1]) ?? undefined;
		}
		const code = raw
			.replace(/\([^)]*\)/g, '')
			.replace(/;.*$/, '')
			.trim();
		if (code === '' || code === '%') return;
		if (/^O\d+$/i.test(code)) return;
		const ws = words(code);
		if (ws === null) return fail(n, raw, 'cannot be read as G-code words');
		const g = ws.filter((w) => w.letter === 'G').map((w) => w.text);
		if (g.includes('10')) {
			if (!units) return fail(n, raw, 'comes before G20 or G21: the unit of the value is unknown');
			if (!absolute)
				return fail(
					n,
					raw,
					'comes before G90: under G91 an ISO-style G10 adds to the offset instead of replacing it'
				);
			const l = ws.find((w) => w.letter === 'L')?.text;
			const pText = ws.find((w) => w.letter === 'P')?.text;
			const p = pText === undefined ? NaN : Number(pText);
			const valueWord = ws.find((w) => w.letter === 'Z' || w.letter === 'R');
			if (!valueWord) return fail(n, raw, 'has no Z or R value');
			if (!valueWord.text.includes('.'))
				return fail(
					n,
					valueWord.text,
					'has no decimal point; some controls read such a number as increments, so load programs always write one'
				);
			const value = Number(valueWord.text);
			if (!Number.isInteger(p)) return fail(n, pText, 'P must be a whole number');
			const setWork = (register: string) => {
				if (valueWord.letter !== 'Z') return fail(n, raw, 'a work offset is written with Z');
				if (register in work) return fail(n, raw, `sets ${register} a second time`);
				work[register] = value;
			};
			const setTool = () => {
				const h = canonicalH(String(p));
				if (h === null) return fail(n, p, 'is not a valid H number (1–9999)');
				if (h in tools) return fail(n, raw, `sets H${h} a second time`);
				tools[h] = value;
			};
			if (l === '2') {
				if (p >= 1 && p <= 6) return setWork(STANDARD_WORK_REGISTERS[p - 1]);
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
				return setTool();
			}
			if (l === '10') {
				if (!setStyle(n, 'iso', raw)) return;
				if (valueWord.letter !== 'R')
					return fail(n, raw, 'ISO-style G10 L10 writes the length with R');
				return setTool();
			}
			if (l === '20') {
				if (!setStyle(n, 'iso', raw)) return;
				if (p < 1 || p > MAX_EXTENDED_REGISTER)
					return fail(n, p, `G10 L20 P must be 1–${MAX_EXTENDED_REGISTER} (G54.1 P1–P48)`);
				return setWork(`G54.1 P${p}`);
			}
			return fail(n, raw, `G10 L${l ?? '?'} is not a form a load program uses`);
		}
		for (const w of ws) {
			if (w.letter === 'G' && (w.text === '20' || w.text === '21')) {
				const u: Units = w.text === '20' ? 'inch' : 'mm';
				if (units !== undefined && units !== u)
					return fail(n, raw, 'changes units part way through');
				units = u;
			} else if (w.letter === 'G' && w.text === '90') absolute = true;
			else if (w.letter === 'G' && w.text === '91')
				return fail(
					n,
					raw,
					'G91 would make ISO-style G10 add to offsets; load programs run in G90'
				);
			else if (w.letter === 'M' && (w.text === '30' || w.text === '2')) continue;
			else return fail(n, raw, `${w.letter}${w.text} is not part of a load program`);
		}
	});

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
	const table: OffsetTable = { convention: convention!, units: units!, work, tools };
	if (masterTool !== undefined && convention === 'master-tool') table.masterTool = masterTool;
	return normalizeTable(table, 'program');
}
