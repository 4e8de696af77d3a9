/**
 * What each G code (× 10) means to the check. Semantics: NIST RS274NGC v3 (NISTIR 6556)
 * §3.4 modal groups, §3.5 codes; ISO-style extras (G54.1 Pn, G65, G68.2) [memory].
 */
import { dialectRules, type Dialect, type DialectRules } from './dialect';

/** How the interpreter treats a G code. */
export const GKind = {
	/** Known and changes nothing the check follows (G4, G40–G42, G61, G64, G93–G95, G17–G19…). */
	Ignore: 0,
	Motion: 1,
	Cycle: 2,
	CycleCancel: 3,
	Units: 4,
	Distance: 5,
	LengthOn: 6,
	LengthOff: 7,
	Work: 8,
	WorkExtended: 9,
	/** G59.1–G59.3: RS274NGC systems 7–9, not registers Datumkeep keeps. */
	WorkUnsupported: 10,
	MachineCoords: 11,
	Home: 12,
	Retract: 13,
	/** Followed only as far as a caution: G10, G92, G52, G51, G30, probing, macros, G43.x. */
	Caution: 14,
	ShiftCancel: 15,
	Unknown: 16
} as const;
export type GKind = (typeof GKind)[keyof typeof GKind];

/** Why a caution-only code is not followed (for the message). */
export const CAUTION_WHY: Record<number, string> = {
	100: 'it writes offsets from inside the program; this check uses the setup’s table',
	300: 'the second reference position is machine-specific; heights after it are not known',
	310: 'probing stops wherever it touches; heights after it are not known',
	380: 'probing stops wherever it touches; heights after it are not known',
	382: 'probing stops wherever it touches; heights after it are not known',
	383: 'probing stops wherever it touches; heights after it are not known',
	384: 'probing stops wherever it touches; heights after it are not known',
	385: 'probing stops wherever it touches; heights after it are not known',
	431: 'a dynamic length offset is not one the setup holds',
	434: 'tool-tip control moves rotary axes this check does not follow',
	510: 'scaling can change every Z',
	520: 'a local coordinate shift moves program zero',
	650: 'macro calls are not followed',
	660: 'macro calls are not followed',
	682: 'tilted working planes are not followed',
	920: 'it shifts the coordinates; Z heights after it are not known'
};

const IGNORE = [
	40, 90, 150, 160, 170, 180, 190, 400, 410, 420, 500, 610, 611, 640, 670, 680, 690, 930, 940, 950,
	960, 970,
	// G90.1 / G91.1: arc centres absolute or incremental; they move no Z end point (common in
	// post headers; NIST v3 does not have them, later RS274NGC interpreters do [memory]).
	901, 911
];
/**
 * ISO-style codes that change no Z end point, met in posted headers [memory]: G5 P_ / G5.1 Q_
 * (high-speed / look-ahead modes), G8 (look-ahead), G103 and G187 (look-ahead, smoothing).
 */
const ISO_IGNORE = [50, 51, 80, 1030, 1870];

/**
 * G codes × 10 → kind, for one dialect: indexed by the code (every code the check knows is
 * below TABLE_SIZE), so the look-up made for every G word of every line is one array read.
 */
export type GTable = Readonly<Uint8Array>;

/** Codes × 10 below this are in the table (G0 … G199.9); any other is unknown. */
const TABLE_SIZE = 2000;

function table(rules: DialectRules): GTable {
	const map = new Map<number, GKind>();
	const t = { set: (code: number, kind: GKind) => map.set(code, kind) };
	for (const c of IGNORE) t.set(c, GKind.Ignore);
	if (rules.dialect === 'iso') for (const c of ISO_IGNORE) t.set(c, GKind.Ignore);
	for (const c of [0, 10, 20, 30]) t.set(c, GKind.Motion);
	for (const c of rules.cycles) t.set(c, GKind.Cycle);
	t.set(800, GKind.CycleCancel);
	t.set(200, GKind.Units);
	t.set(210, GKind.Units);
	t.set(900, GKind.Distance);
	t.set(910, GKind.Distance);
	t.set(430, GKind.LengthOn);
	t.set(490, GKind.LengthOff);
	for (const c of [540, 550, 560, 570, 580, 590]) t.set(c, GKind.Work);
	t.set(541, GKind.WorkExtended);
	for (const c of [591, 592, 593]) t.set(c, GKind.WorkUnsupported);
	t.set(530, GKind.MachineCoords);
	t.set(280, GKind.Home);
	t.set(980, GKind.Retract);
	t.set(990, GKind.Retract);
	for (const c of Object.keys(CAUTION_WHY)) t.set(Number(c), GKind.Caution);
	t.set(921, GKind.ShiftCancel);
	t.set(922, GKind.ShiftCancel);
	const dense = new Uint8Array(TABLE_SIZE).fill(GKind.Unknown);
	for (const [code, kind] of map) {
		if (code < 0 || code >= TABLE_SIZE) throw new Error(`G code ${code} is outside the table`);
		dense[code] = kind;
	}
	return dense;
}

const TABLES: Record<Dialect, GTable> = {
	iso: table(dialectRules('iso')),
	rs274ngc: table(dialectRules('rs274ngc'))
};

/** The code table of a dialect. */
export function gTable(dialect: Dialect): GTable {
	return TABLES[dialect];
}

/** The kind of a G code × 10 (RS274NGC-style unless a table is given). */
export function gKind(code: number, t: GTable = TABLES.rs274ngc): GKind {
	return code >= 0 && code < TABLE_SIZE ? (t[code] as GKind) : GKind.Unknown;
}

/** "G54.1" for 541, "G0" for 0. */
export function gText(code: number): string {
	if (code >= 0 && code < TABLE_SIZE) return (G_TEXT[code] ??= writeG(code));
	return writeG(code);
}

/** gText of the codes in the table, each written once (G54 comes back at every op). */
const G_TEXT: string[] = [];

function writeG(code: number): string {
	return code % 10 === 0 ? `G${code / 10}` : `G${Math.trunc(code / 10)}.${Math.abs(code % 10)}`;
}
