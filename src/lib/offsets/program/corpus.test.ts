/**
 * The program corpus (tests/fixtures/programs/): programs we wrote ourselves in the styles
 * shops meet — posted ISO-style, RS274NGC-style with o-subs and parameters, hand-written with
 * lowercase, no spaces, CRLF, a BOM and typos. Each file says in its own comments how to check
 * it (`(CHECK AS ISO ON PUMP)`) and what must be found (`(EXPECT kind severity LINE n - rule)`,
 * or `(EXPECT NONE …)`), worked out by hand. The check must find exactly that: no false stop
 * on a clean program, every planted risk caught on its line.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { checkProgram } from './checker';
import type { ProgramSetup } from './schema';
import { PUMP } from './test-data';

const DIR = join(process.cwd(), 'tests/fixtures/programs');

/**
 * Mill 3 (metric, 510 mm of Z travel) with the flange in G54: zero and part top 40 mm above
 * the reference, a 50 mm clamp; reference-touch offsets (DESIGN.md §2, §9). Invented.
 */
const FLANGE: ProgramSetup = {
	machine: { name: 'Mill 3', units: 'mm', zTravel: 510 },
	table: {
		convention: 'reference-touch',
		units: 'mm',
		work: { G54: 40 },
		tools: { '1': -380, '2': -395.5 }
	},
	setup: {
		units: 'mm',
		fixtures: [{ register: 'G54', zeroHeight: 40 }],
		obstacles: [{ label: 'clamp', height: 50 }]
	}
};

const SETUPS: Record<string, ProgramSetup> = { PUMP, FLANGE };

interface Expected {
	dialect: 'iso' | 'rs274ngc';
	setup: ProgramSetup;
	findings: [string, string, number][];
}

function expectations(text: string, file: string): Expected {
	const how = /\(CHECK AS (ISO|RS274NGC) ON (\w+)\)/.exec(text);
	if (!how) throw new Error(`${file}: no (CHECK AS … ON …) line`);
	const findings: [string, string, number][] = [];
	for (const m of text.matchAll(/\(EXPECT ([A-Z-]+) (STOP|CAUTION) LINE (\d+) - /g))
		findings.push([m[1].toLowerCase(), m[2].toLowerCase(), Number(m[3])]);
	if (findings.length === 0 && !/\(EXPECT NONE\b/.test(text))
		throw new Error(`${file}: no (EXPECT …) line`);
	return {
		dialect: how[1] === 'ISO' ? 'iso' : 'rs274ngc',
		setup: SETUPS[how[2]],
		findings
	};
}

const byLine = (a: [string, string, number], b: [string, string, number]) =>
	a[2] - b[2] || a[0].localeCompare(b[0]);

const files = readdirSync(DIR)
	.filter((f) => f.endsWith('.nc'))
	.sort();

describe('program corpus', () => {
	test('holds at least 30 programs in every style named', () => {
		expect(files.length).toBeGreaterThanOrEqual(30);
		const prefixes = new Set(files.map((f) => f.split('-')[1]));
		expect([...prefixes].sort()).toEqual(['hand', 'iso', 'ngc']);
	});

	test.each(files)('%s: exactly the findings worked out by hand', (file) => {
		const text = readFileSync(join(DIR, file), 'utf8');
		const want = expectations(text, file);
		const r = checkProgram(text, { ...want.setup, dialect: want.dialect });
		const got = r.findings
			.map(
				(f) =>
					[f.kind, f.severity, f.subject.type === 'program-line' ? f.subject.line : 0] as [
						string,
						string,
						number
					]
			)
			.sort(byLine);
		expect(got, r.findings.map((f) => f.message).join('\n')).toEqual(want.findings.sort(byLine));
		if (!want.findings.some((f) => f[1] === 'stop')) expect(r.stats.severityCounts.stop).toBe(0);
		expect(r.stats.dialect).toBe(want.dialect);
	});
});
