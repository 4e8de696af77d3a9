import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import type { Convention } from './conventions';
import { OffsetInputError } from './errors';
import { CONTROL_STYLE_LABEL, loadProgram } from './load-program';
import { parseLoadProgram } from './parse-load-program';
import type { Machine, OffsetTable } from './types';

// Example data (invented): Mill 1 (inch, 20 in travel) and Mill 3 (metric, 510 mm travel).
const MILL1: Machine = {
	name: 'Mill 1',
	units: 'inch',
	zTravel: 20,
	convention: 'reference-touch',
	controlStyle: 'rs274ngc'
};
const MILL3: Machine = {
	name: 'Mill 3',
	units: 'mm',
	zTravel: 510,
	convention: 'gauge-length',
	controlStyle: 'iso'
};
const RT: OffsetTable = {
	convention: 'reference-touch',
	units: 'inch',
	work: { G54: 1.25, G59: 3 },
	tools: { '1': -13, '12': -12.6001 }
};
const codeLines = (text: string) => text.split('\n').filter((l) => l && !l.startsWith('('));

describe('loadProgram', () => {
	test('RS274NGC-style: G10 L2 P1 for G54, G10 L1 for tool lengths, G20 G90', () => {
		// NIST RS274NGC v3 (NISTIR 6556) §3.5.5: G10 L2 P1…P6 = G54…G59, Z only changes Z
		// LinuxCNC G-code manual: G10 L1 P_ Z_ writes a tool-table entry
		const text = loadProgram(MILL1, RT);
		expect(codeLines(text)).toEqual([
			'%',
			'G20 G90',
			'G10 L2 P1 Z1.2500',
			'G10 L2 P6 Z3.0000',
			'G10 L1 P1 Z-13.0000',
			'G10 L1 P12 Z-12.6001',
			'M30',
			'%'
		]);
	});

	test('ISO-style: G10 L10 P_ R_ and G10 L20 Pn for G54.1 Pn, G21 in mm', () => {
		// ISO-style mill control manual §1.2.10: G10 L10 P_ R_ = length geometry; G10 L20 P1–P48 = G54.1 P1–P48 [secondary]
		const table: OffsetTable = {
			convention: 'gauge-length',
			units: 'mm',
			work: { 'G54.1 P7': -345.5, G55: -300 },
			tools: { '3': 101.6 }
		};
		const text = loadProgram(MILL3, table, { programNumber: 42 });
		expect(codeLines(text)).toEqual([
			'%',
			'O0042',
			'G21 G90',
			'G10 L2 P2 Z-300.000',
			'G10 L20 P7 Z-345.500',
			'G10 L10 P3 R101.600',
			'M30',
			'%'
		]);
		expect(text).toMatch(/WEAR VALUES ARE LEFT AS THEY ARE/);
	});

	test('cautions are written as comments', () => {
		// Modern Machine Shop, Lynch, "Key CNC Concept 10": treat every new program as suspect
		const text = loadProgram(MILL1, RT);
		for (const words of [
			'SINGLE BLOCK',
			'RAPID AND FEED',
			'LIFT CLEAR IN Z',
			'MACHINE BUILDER',
			'CHECK EVERY VALUE'
		]) {
			expect(text).toContain(words);
		}
		expect(text).not.toMatch(/\(.*\(/); // no nested parentheses in comments
	});

	test('values at the control resolution, always with a decimal point', () => {
		// common shop practice: a number without a decimal point may be read as increments on ISO-style controls
		const text = loadProgram({ ...MILL1, resolution: 0.001 }, { ...RT, tools: { '1': -13.00049 } });
		expect(text).toContain('G10 L1 P1 Z-13.000');
		expect(codeLines(loadProgram(MILL1, { ...RT, work: { G54: 2 } }))).toContain(
			'G10 L2 P1 Z2.0000'
		);
	});

	test('RS274NGC-style has no G54.1 P registers: clear error', () => {
		// NIST RS274NGC v3 §3.5.5: its P7–P9 are G59.1–G59.3, not G54.1 Pn
		try {
			loadProgram(MILL1, { ...RT, work: { 'G54.1 P3': 1 } });
			expect.unreachable();
		} catch (e) {
			expect((e as OffsetInputError).issues[0]).toMatchObject({
				field: 'table.work.G54.1 P3',
				value: 1
			});
			expect((e as OffsetInputError).issues[0].message).toMatch(/G10 L10 length form/);
		}
	});

	test('refuses a table in another convention, and values beyond travel', () => {
		expect(() => loadProgram(MILL3, { ...RT, units: 'mm' })).toThrow(/table.convention/);
		expect(() => loadProgram(MILL1, { ...RT, tools: { '1': -21 } })).toThrow(
			/table.tools.1: is beyond the Z travel/
		);
		expect(() => loadProgram({ ...MILL1, zTravel: Number.NaN }, RT)).toThrow(/machine.zTravel/);
	});

	test('extended work offsets up to the number the machine has', () => {
		// ISO-style mill control manual §1.2.10 [secondary]: G10 L20 Pn = G54.1 Pn; how many a
		// control has is the machine builder's choice, so it is a machine setting here.
		const table: OffsetTable = {
			convention: 'gauge-length',
			units: 'mm',
			work: { 'G54.1 P7': -345.5 },
			tools: {}
		};
		expect(loadProgram({ ...MILL3, extendedWorkOffsets: 7 }, table)).toMatch(
			/G10 L20 P7 Z-345\.500/
		);
		expect(() => loadProgram({ ...MILL3, extendedWorkOffsets: 6 }, table)).toThrow(
			/table.work.G54.1 P7: is beyond the 6 extended work offsets Mill 3 is set to have/
		);
	});

	test('style labels in our own words', () => {
		expect(CONTROL_STYLE_LABEL).toEqual({
			rs274ngc: 'Tool table, G10 L1 (P tool, Z length)',
			iso: 'Length registers, G10 L10 (P H number, R length)'
		});
	});
});

describe('parseLoadProgram', () => {
	test('reads back what was written', () => {
		expect(parseLoadProgram(loadProgram(MILL1, RT))).toEqual(RT);
	});

	test('reads a hand-written program with free spacing', () => {
		// LinuxCNC G-code manual: G10 L2 P2 sets G55 from the machine origin; only axes given change
		const text = 'G21 G90\n(CONVENTION GAUGE-LENGTH)\ng10l2p2 z-300.000\nG10 L10 P3 R101.600\nM30';
		expect(parseLoadProgram(text)).toEqual({
			convention: 'gauge-length',
			units: 'mm',
			work: { G55: -300 },
			tools: { '3': 101.6 }
		});
	});

	test('refuses what it cannot be sure of, naming the line', () => {
		expect(() => parseLoadProgram('G20 G90\n(CONVENTION REFERENCE-TOUCH)\nG10 L2 P1 Z1')).toThrow(
			/line 3: has no decimal point/
		);
		expect(() => parseLoadProgram('G20 G91\nG10 L10 P1 R1.0')).toThrow(/line 1/);
		expect(() => parseLoadProgram('G20 G90\n(CONVENTION REFERENCE-TOUCH)\nG10 L2 P7 Z1.0')).toThrow(
			/line 3: .*P must be 1–6/
		);
		expect(() =>
			parseLoadProgram('G20 G90\n(CONVENTION REFERENCE-TOUCH)\nG10 L1 P1 Z-1.0\nG10 L10 P2 R-1.0')
		).toThrow(/line 4: mixes/);
		expect(() => parseLoadProgram('G20 G90\nG10 L2 P1 Z1.0')).toThrow(/convention/);
		expect(() => parseLoadProgram('G0 X1.0')).toThrow(OffsetInputError);
	});

	test('property: parse(loadProgram(t)) = t for both styles and every convention', () => {
		const regsRs = ['G54', 'G55', 'G56', 'G57', 'G58', 'G59'];
		const regsIso = [...regsRs, ...Array.from({ length: 48 }, (_, k) => `G54.1 P${k + 1}`)];
		fc.assert(
			fc.property(
				fc.constantFrom<'rs274ngc' | 'iso'>('rs274ngc', 'iso'),
				fc.constantFrom<'inch' | 'mm'>('inch', 'mm'),
				fc.constantFrom<Convention>('reference-touch', 'gauge-length', 'master-tool'),
				fc.uniqueArray(fc.nat(53), { maxLength: 8 }),
				fc.uniqueArray(fc.integer({ min: 1, max: 400 }), { minLength: 1, maxLength: 8 }),
				fc.array(fc.integer({ min: -190_000, max: 190_000 }), { minLength: 16, maxLength: 16 }),
				(style, units, convention, regIdx, hs, counts) => {
					const step = units === 'inch' ? 10000 : 1000; // 0.0001 in / 0.001 mm
					const regs = (style === 'iso' ? regsIso : regsRs).filter((_, k) => regIdx.includes(k));
					const work = Object.fromEntries(regs.map((r, k) => [r, counts[k % 16] / step]));
					const tools = Object.fromEntries(
						hs.map((h, k) => [
							String(h),
							k === 0 && convention === 'master-tool' ? 0 : counts[(k + 8) % 16] / step
						])
					);
					const table: OffsetTable = {
						convention,
						units,
						work,
						tools,
						...(convention === 'master-tool' ? { masterTool: String(hs[0]) } : {})
					};
					const machine: Machine = {
						units,
						zTravel: units === 'inch' ? 20 : 510,
						convention,
						controlStyle: style
					};
					const back = parseLoadProgram(loadProgram(machine, table), machine);
					// same registers with the same values (key order aside)
					expect(back).toEqual(table);
					expect(Object.keys(back.work).sort()).toEqual(Object.keys(work).sort());
				}
			)
		);
	});
});
