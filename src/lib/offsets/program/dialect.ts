/**
 * The two dialects a program is checked in (DESIGN.md §7 "Dialect"), chosen per machine from
 * its control style. Each rule names where it comes from; docs/OFFSETS.md §13 lists them.
 */

/** `iso`: ISO 6983 as VMC controls commonly read it. `rs274ngc`: NIST RS274NGC v3. */
export type Dialect = 'iso' | 'rs274ngc';

/** Where the dialect came from: the check's own choice, the machine's control style, or none. */
export type DialectFrom = 'chosen' | 'machine' | 'default';

/** The rules that differ between the dialects. */
export interface DialectRules {
	dialect: Dialect;
	/**
	 * G80 may share a block with G0–G3. ISO-style: G80 cancels the cycle in a group of its own,
	 * so the safe-start block `G0 G17 G40 G49 G80 G90` is accepted (common shop practice; ISO
	 * 6983 [memory]). RS274NGC: G80 and G0–G3 are all modal group 1, two of them in one block
	 * is an error (NISTIR 6556 §3.4 modal groups [memory]).
	 */
	cycleCancelOwnGroup: boolean;
	/**
	 * What `G43` with no H word applies. ISO-style: the H last given stays in force (H is modal
	 * on such controls [memory]). RS274NGC-style: the loaded tool's entry, as the open-source
	 * controller's manual documents for G43 without H (SOURCES.md #2 [memory]); NISTIR 6556
	 * §3.5.11 itself only describes G43 H_.
	 */
	g43WithoutH: 'last-h' | 'loaded-tool';
	/**
	 * Drilling cycles followed (× 10). RS274NGC v3 has G81–G89 only (NISTIR 6556 §3.5.16–3.5.20, SOURCES.md #1
	 * [read]); ISO-style mills add G73 (high-speed peck), G74 (left-hand tap) and G76 (fine
	 * boring) [memory].
	 */
	cycles: readonly number[];
	/**
	 * Subprograms in the same file. ISO-style: `O1234 … M99` blocks after the main program's
	 * M30/M02, called with `M98 P1234` (L or K repeats) [memory]. RS274NGC-style: `o100 sub …
	 * o100 endsub` called with `o100 call` (the open-source controller's o-codes, SOURCES.md #2
	 * [memory]; NIST v3 itself has no subprograms).
	 */
	subprograms: 'o-number' | 'o-sub';
	/** Plain name for screens and messages. */
	label: string;
}

const ISO: DialectRules = {
	dialect: 'iso',
	cycleCancelOwnGroup: true,
	g43WithoutH: 'last-h',
	cycles: [730, 740, 760, 810, 820, 830, 840, 850, 860, 870, 880, 890],
	subprograms: 'o-number',
	label: 'ISO-style'
};

const NGC: DialectRules = {
	dialect: 'rs274ngc',
	cycleCancelOwnGroup: false,
	g43WithoutH: 'loaded-tool',
	cycles: [810, 820, 830, 840, 850, 860, 870, 880, 890],
	subprograms: 'o-sub',
	label: 'RS274NGC-style'
};

/** The rules of a dialect. */
export function dialectRules(d: Dialect): DialectRules {
	return d === 'iso' ? ISO : NGC;
}

/** Every dialect, for a form's choices. */
export const DIALECTS: readonly Dialect[] = ['iso', 'rs274ngc'];
