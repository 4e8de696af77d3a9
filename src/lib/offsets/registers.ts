/**
 * Work offset registers and H numbers: reading them however they were typed, writing them
 * one way. Valid work registers are G54–G59 and G54.1 P1–P48; H numbers are 1–9999
 * (H0 means "no length offset" in RS274NGC, NISTIR 6556 §3.5.11, so it is never a table entry).
 */

/** The six standard work offsets, in order. */
export const STANDARD_WORK_REGISTERS = ['G54', 'G55', 'G56', 'G57', 'G58', 'G59'] as const;

/** Highest extended work offset number (G54.1 P1–P48). */
export const MAX_EXTENDED_REGISTER = 48;

/** Highest H number we accept. */
export const MAX_H_NUMBER = 9999;

/** A work register in canonical form: "G54"…"G59" or "G54.1 P1"…"G54.1 P48". */
export type WorkRegister = string;

/** Canonical form of a work register, or null when it is not one we know. */
export function canonicalRegister(text: string): WorkRegister | null {
	if (typeof text !== 'string') return null;
	const compact = text.replace(/\s+/g, '').toUpperCase();
	const std = /^G0*5([4-9])$/.exec(compact);
	if (std) return `G5${std[1]}`;
	const ext = /^G0*54\.1P0*(\d{1,2})$/.exec(compact);
	if (ext) {
		const n = Number(ext[1]);
		if (n >= 1 && n <= MAX_EXTENDED_REGISTER) return `G54.1 P${n}`;
	}
	return null;
}

/** Canonical H number ("1"… "9999") or null. Accepts "H3", "h03", "3". */
export function canonicalH(text: string): string | null {
	if (typeof text !== 'string') return null;
	const m = /^H?0*(\d{1,4})$/i.exec(text.trim());
	if (!m) return null;
	const n = Number(m[1]);
	return n >= 1 && n <= MAX_H_NUMBER ? String(n) : null;
}

/** Why a register string was refused, in words for the person who typed it. */
export const REGISTER_RULE = 'must be a work offset G54–G59 or G54.1 P1–P48';

/** Why an H number was refused. */
export const H_RULE = `must be a tool length offset number from 1 to ${MAX_H_NUMBER} (H0 means no offset)`;

/** Sort position: G54…G59 first, then G54.1 P1…P48. */
export function registerOrder(register: WorkRegister): number {
	const std = STANDARD_WORK_REGISTERS.indexOf(register as (typeof STANDARD_WORK_REGISTERS)[number]);
	if (std >= 0) return std;
	const ext = /^G54\.1 P(\d+)$/.exec(register);
	return ext ? 100 + Number(ext[1]) : 1000;
}

/** Sorts registers into control order. */
export function sortRegisters(registers: Iterable<WorkRegister>): WorkRegister[] {
	return [...registers].sort((a, b) => registerOrder(a) - registerOrder(b));
}

/** Sorts H numbers numerically. */
export function sortH(hs: Iterable<string>): string[] {
	return [...hs].sort((a, b) => Number(a) - Number(b));
}

/** The extended number n of "G54.1 Pn", or null for G54–G59. */
export function extendedNumber(register: WorkRegister): number | null {
	const m = /^G54\.1 P(\d+)$/.exec(register);
	return m ? Number(m[1]) : null;
}

/** How a control's programs address extended work offsets: `G54.1 P3` or `G54 P3`. */
export const EXTENDED_ADDRESS_FORMS = ['G54.1 P', 'G54 P'] as const;
export type ExtendedAddressForm = (typeof EXTENDED_ADDRESS_FORMS)[number];

/**
 * A work register as the machine's own programs write it: "G54.1 P3" stays, or becomes
 * "G54 P3" on a machine that addresses extended offsets that way. Stored keys never change.
 */
export function registerForMachine(
	register: WorkRegister,
	form: ExtendedAddressForm = 'G54.1 P'
): string {
	const n = extendedNumber(register);
	return n === null ? register : `${form}${n}`;
}
