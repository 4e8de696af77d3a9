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

const escapeHtml = (s: string) =>
	s.replace(
		/[&<>"']/g,
		(c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!
	);

/** The download: plain text with content-disposition: attachment. */
export function programResponse(result: Extract<LoadProgramResult, { ok: true }>): Response {
	return new Response(result.text, {
		headers: {
			'content-type': 'text/plain; charset=utf-8',
			'content-disposition': `attachment; filename="${result.filename}"`,
			'cache-control': 'private, no-store'
		}
	});
}

/**
 * A refusal: 422 with the engine's reasons — a small page of its own for a browser that followed
 * the download link (endpoints do not get the app's error page), JSON for anything else.
 */
export function refusalResponse(
	request: Request,
	what: string,
	reasons: string[],
	backHref: string
): Response {
	const accept = request.headers.get('accept') ?? '';
	if (!accept.includes('text/html')) {
		return new Response(JSON.stringify({ message: `No load program for ${what}.`, reasons }), {
			status: 422,
			headers: { 'content-type': 'application/json' }
		});
	}
	const items = reasons.map((r) => `<li>${escapeHtml(r)}</li>`).join('');
	const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>No load program — Datumkeep</title>
<style>body{font-family:Inter,ui-sans-serif,system-ui,sans-serif;background:#fafaf9;color:#1c1917;margin:0}
main{max-width:40rem;margin:4rem auto;padding:0 1.5rem}p.k{color:#78716c;font-size:.875rem;margin:0}
h1{font-size:1.5rem;margin:.25rem 0 1rem}ul{background:#fff;border:1px solid #b91c1c;border-radius:.5rem;padding:1rem 1rem 1rem 2.25rem}
li{margin:.25rem 0}a{display:inline-block;margin-top:1rem;padding:.6rem 1rem;border:1px solid #d6d3d1;border-radius:.375rem;background:#fff;color:#1c1917;text-decoration:none}</style></head>
<body><main data-testid="load-program-refused"><p class="k">Error 422 · Load program</p>
<h1><span aria-hidden="true">⛔</span> Stop: no load program for ${escapeHtml(what)}</h1>
<p>The offset engine refused to write it, and nothing was downloaded:</p><ul>${items}</ul>
<p>Put this right on the machine or setup page, then download again.</p>
<a href="${escapeHtml(backHref)}">Back</a></main></body></html>`;
	return new Response(html, {
		status: 422,
		headers: { 'content-type': 'text/html; charset=utf-8' }
	});
}

/** 404 for a setup id that is not in this shop. */
export function noSuchSetup(): never {
	error(404, 'No such setup in this shop.');
}
