import { formatWithUnits, type Finding, type ProgramCheckResult } from '$lib/offsets';
import { fileSlug } from '../setups/load-program';
import type { CheckInput } from './input';
import type { CheckView, VersionView } from './store';
import { findingLine, KIND_LABEL, summarize, type Freshness } from './summary';

/** The cautions printed on every report (same words as the Cautions component). */
export const REPORT_CAUTIONS = [
	'Verify every value against the control’s offset page after entering or loading it.',
	'Run the first part single block, with rapid and feed overrides turned down.',
	'Lift clear in Z before any move between fixtures.',
	'Follow the machine builder’s manual and your shop’s own practice.',
	'This check reads the program text against the offsets recorded in Datumkeep; it does not simulate cutting, arcs between their end points, or macros.'
];

export interface ReportInput {
	shopName: string;
	setup: { id: number; name: string; job: string };
	program: { id: number; name: string };
	version: VersionView;
	check: CheckView;
	input: CheckInput;
	result: ProgramCheckResult;
	/** Text of the lines the findings point at. */
	lineText: Map<number, string>;
	generatedAt: Date;
	generatedBy: string;
}

const FRESH: Record<Freshness, string> = {
	ok: 'OK',
	stale: 'Stale',
	unset: 'Not measured',
	unknown: '?'
};

/** A Markdown table (plain text that also reads well unrendered). */
function table(head: string[], rows: string[][]): string {
	const cell = (s: string) => s.replace(/\|/g, '\\|').replace(/\n/g, ' ');
	return [
		`| ${head.map(cell).join(' | ')} |`,
		`| ${head.map(() => '---').join(' | ')} |`,
		...rows.map((r) => `| ${r.map(cell).join(' | ')} |`)
	].join('\n');
}

const stamp = (iso: string | null) =>
	iso ? iso.replace('T', ' ').replace(/\.\d+Z$/, ' UTC') : '—';

/**
 * The program check as a Markdown file a lead attaches to the job: which setup, machine and
 * exact program text (version, SHA-256), the summary, every finding with its line, cautions.
 */
export function buildReport(r: ReportInput): { filename: string; text: string } {
	const s = summarize(r.input, r.result);
	const m = r.input.programSetup.machine;
	const fmt = (v: number | null) => (v === null ? '—' : formatWithUnits(v, m.units, s.resolution));
	const verdict =
		s.stops > 0
			? `STOP — ${s.stops} stop finding${s.stops === 1 ? '' : 's'} and ${s.cautions} caution${s.cautions === 1 ? '' : 's'}: do not run until fixed.`
			: s.cautions > 0
				? `CAUTION — ${s.cautions} caution${s.cautions === 1 ? '' : 's'}: look at each before running.`
				: 'OK — no findings against this setup.';
	const out: string[] = [];
	out.push(`# Program check: ${r.program.name} (version ${r.version.version})`, '');
	out.push(
		`- **Result:** ${verdict}`,
		`- **Shop:** ${r.shopName}`,
		`- **Setup:** ${r.setup.name}${r.setup.job ? ` — ${r.setup.job}` : ''} (setup ${r.setup.id})`,
		`- **Machine:** ${r.input.machineName} (${m.units === 'inch' ? 'inch' : 'mm'}, Z travel ${typeof m.zTravel === 'number' ? fmt(m.zTravel) : `${fmt(m.zTravel.min)} to ${fmt(m.zTravel.max)}`}, ${r.input.programSetup.table.convention})`,
		`- **Program file:** ${r.version.originalName}, ${r.version.lineCount} lines, ${r.version.byteSize} bytes`,
		`- **SHA-256:** \`${r.version.sha256}\``,
		`- **Uploaded:** ${stamp(r.version.uploadedAt)} by ${r.version.uploadedByName ?? 'unknown'}`,
		`- **Checked:** ${stamp(r.check.checkedAt)} (${r.check.mode === 'inline' ? 'on upload' : 'in the background'}), against the offsets recorded at upload`,
		''
	);

	out.push('## Summary', '');
	out.push(
		`- Units: machine ${m.units}, program ${s.units.program === null ? 'states none (no G20/G21)' : s.units.program}`,
		`- Lines read: ${s.lines}; moves: ${s.moves}`,
		`- Checked as: ${s.dialect.label} (${s.dialect.from === 'chosen' ? 'chosen for this check' : s.dialect.from === 'machine' ? "from the machine's control style" : 'the default'})`,
		...(s.unknownSpans.length > 0
			? [
					`- Heights unknown (not checked): ${s.unknownSpans.map(([a, b]) => `lines ${a}–${b ?? 'end'}`).join(', ')}`
				]
			: []),
		`- Clearance height: ${fmt(s.clearanceHeight)} above the reference (tallest obstacle + margin)`,
		''
	);
	out.push('### Work offsets used', '');
	out.push(
		s.work.length
			? table(
					['Register', 'Work offset Z', 'Measured', 'State', 'Clearance plane'],
					s.work.map((w) => [
						w.register,
						fmt(w.value),
						stamp(w.measuredAt),
						`${FRESH[w.freshness]}${w.states.length ? ` (${w.states.join(', ')})` : ''}`,
						w.clearance === null ? '—' : `Z ${fmt(w.clearance)}`
					])
				)
			: 'None (the program makes no move).',
		''
	);
	out.push('### Tools used', '');
	out.push(
		s.tools.length
			? table(
					['T', 'H', 'Tool', 'Length offset', 'Measured', 'State', 'Tip Z lowest', 'Tip Z highest'],
					s.tools.map((t) => [
						`T${t.t}`,
						`H${t.h}`,
						t.description || '—',
						fmt(t.value),
						stamp(t.measuredAt),
						`${FRESH[t.freshness]}${t.states.length ? ` (${t.states.join(', ')})` : ''}`,
						t.tipZ ? fmt(t.tipZ.min) : '—',
						t.tipZ ? fmt(t.tipZ.max) : '—'
					])
				)
			: 'None loaded.',
		'',
		'Tip Z is the tool tip’s height above the machine’s reference surface.',
		''
	);
	out.push('### Clearance planes (each fixture’s own coordinates)', '');
	const planes = Object.entries(s.clearancePlanes);
	out.push(
		planes.length
			? table(
					['Register', 'Lowest safe retract'],
					planes.map(([reg, z]) => [reg, `Z ${fmt(z)}`])
				)
			: '—',
		''
	);

	out.push('## Findings', '');
	if (r.result.findings.length === 0) out.push('None.', '');
	r.result.findings.forEach((f: Finding, i) => {
		const line = findingLine(f);
		const code = line !== null ? r.lineText.get(line) : undefined;
		out.push(
			`${i + 1}. **${f.severity === 'stop' ? 'STOP' : 'CAUTION'}** · ${KIND_LABEL[f.kind] ?? f.kind}${line !== null ? ` · line ${line}` : ''}`,
			`   ${f.message}`
		);
		if (code !== undefined) out.push(`   \`${code.replace(/`/g, "'")}\``);
		out.push('');
	});
	if (s.suppressed > 0)
		out.push(
			`${s.suppressed} more findings of kinds already listed are counted but not shown.`,
			''
		);

	out.push('## Cautions', '');
	for (const c of REPORT_CAUTIONS) out.push(`- ${c}`);
	out.push(
		'',
		`---`,
		`Datumkeep program check report, written ${stamp(r.generatedAt.toISOString())} for ${r.generatedBy}.`,
		''
	);
	return {
		filename: `${fileSlug('program-check', r.program.name, `v${r.version.version}`)}.md`,
		text: out.join('\n')
	};
}
