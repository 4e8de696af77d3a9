import { error } from '@sveltejs/kit';
import { describeValue } from '$lib/offsets/errors';
import { isOffsetInputError, loadProgram, type OffsetTable } from '$lib/offsets';
import { engineMachine, type MachineRecord } from '../offsets/machine-state';
import { gateReason, isWithheld, type GatedRegister } from '../offsets/gate';
import type { ProgramComponents } from '../components/load-program';

/** A load program, or the reasons it cannot be written (the engine's own words). */
export type LoadProgramResult =
	| {
			ok: true;
			text: string;
			filename: string;
			/** Stop or stale registers left out, and those a lead included with a warning. */
			withheld: GatedRegister[];
			included: GatedRegister[];
	  }
	| { ok: false; reasons: string[] };

/** The gate's say in a load program: the verdicts, and whether a lead includes the flagged. */
export interface LoadProgramGate {
	rows: GatedRegister[];
	/** A lead's explicit choice to include Stop and stale registers (their name for the comment). */
	includeFlaggedBy?: string;
}

/** "Mill 1", "Pump housing, ops A and B" → "mill-1-pump-housing-ops-a-and-b". */
export function fileSlug(...parts: string[]): string {
	return (
		parts
			.join(' ')
			.toLowerCase()
			.normalize('NFKD')
			.replace(/[^a-z0-9]+/g, '-')
			.replace(/^-+|-+$/g, '')
			.slice(0, 80) || 'load-program'
	);
}

/**
 * Runs the engine's loadProgram for `table` on `machine`. Registers that were never measured
 * (`missing`) refuse the program: loading it would leave whatever old value the control holds.
 */
export function buildLoadProgram(
	machine: MachineRecord,
	table: OffsetTable,
	opts: {
		title: string;
		filename: string;
		missing?: string[];
		gate?: LoadProgramGate;
		/** X/Y, radius and wear (issue 20); only those of registers in `table` are written. */
		components?: ProgramComponents;
	}
): LoadProgramResult {
	if (opts.missing && opts.missing.length > 0) {
		return {
			ok: false,
			reasons: opts.missing.map(
				(r) =>
					`${r} has never been measured on ${machine.name}: record it first, or the control would keep whatever value it holds now.`
			)
		};
	}
	if (Object.keys(table.work).length === 0 && Object.keys(table.tools).length === 0) {
		return { ok: false, reasons: [`${machine.name} has no measured offsets to load yet.`] };
	}
	// The gate: Stop and stale registers are withheld unless a lead includes them on purpose.
	const inTable = (r: GatedRegister) =>
		(r.section === 'work' ? table.work : table.tools)[r.register] !== undefined;
	const flagged = (opts.gate?.rows ?? []).filter((r) => isWithheld(r) && inTable(r));
	const by = opts.gate?.includeFlaggedBy;
	const withheld = by ? [] : flagged;
	const included = by ? flagged : [];
	// Components go with their register: only registers in this table, gated like Z.
	const comps = opts.components;
	const keep = <T>(section: 'work' | 'tools', rec: Record<string, T> | undefined) =>
		Object.fromEntries(
			Object.entries(rec ?? {}).filter(
				([k]) => (section === 'work' ? table.work : table.tools)[k] !== undefined
			)
		);
	const compFlagged = (comps?.flagged ?? []).filter(
		(f) => (f.section === 'work' ? table.work : table.tools)[f.register] !== undefined
	);
	// Everything withheld still gives a file: its comments say what was left out and why.
	try {
		const text = loadProgram(engineMachine(machine), table, {
			...(comps
				? {
						components: {
							work: keep('work', comps.values.work),
							tools: keep('tools', comps.values.tools),
							cutterRegister: comps.values.cutterRegister
						}
					}
				: {}),
			title: opts.title.slice(0, 60),
			withheld: [
				...withheld.map((r) => ({
					section: r.section,
					register: r.register,
					reason: `${gateReason(r)} - RE-MEASURE IT`.slice(0, 300)
				})),
				...(by ? [] : compFlagged.map((f) => ({ ...f, reason: f.reason.slice(0, 300) })))
			],
			warnings: [
				...included.map((r) => ({
					section: r.section,
					register: r.register,
					reason: `${gateReason(r)} - INCLUDED BY ${by} - CHECK IT AT THE CONTROL`.slice(0, 300)
				})),
				...(by
					? compFlagged.map((f) => ({
							section: f.section,
							register: f.register,
							reason: `${f.component} ${f.reason} - INCLUDED BY ${by}`.slice(0, 300)
						}))
					: [])
			]
		});
		return { ok: true, text, filename: `${opts.filename}.nc`, withheld, included };
	} catch (e) {
		if (!isOffsetInputError(e)) throw e;
		return {
			ok: false,
			reasons: e.issues.map(
				(i) => `${readableField(i.field)} (${describeValue(i.value)}) ${i.message}`
			)
		};
	}
}

/** table.work.G54.1 P3 → "Work offset G54.1 P3"; table.tools.4 → "Tool length H4". */
function readableField(field: string): string {
	const work = /^table\.work\.(.+)$/.exec(field);
	if (work) return `Work offset ${work[1]}`;
	const tool = /^table\.tools\.(.+)$/.exec(field);
	if (tool) return `Tool length H${tool[1]}`;
	return field;
}

/** 404 for a setup id that is not in this shop. */
export function noSuchSetup(): never {
	error(404, 'No such setup in this shop.');
}
