import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import type { Convention } from './conventions';
import { OffsetInputError } from './errors';
import { loadProgram } from './load-program';
import { parseControlFile, parseLoadProgram } from './parse-load-program';
import { compareReadback, type ReadbackCause } from './readback';
import type { Machine, OffsetTable } from './types';

// Example data (invented, DESIGN.md §9): Mill 1 (inch) and Mill 3 (metric), in both styles.
const MILL1_NGC: Machine = {
	name: 'Mill 1',
	units: 'inch',
	zTravel: 20,
	convention: 'reference-touch',
	controlStyle: 'rs274ngc'
};
const MILL1_ISO: Machine = { ...MILL1_NGC, controlStyle: 'iso' };
const MILL3_ISO: Machine = {
	name: 'Mill 3',
	units: 'mm',
	zTravel: 510,
	convention: 'gauge-length',
	controlStyle: 'iso'
};
const MILL3_NGC: Machine = { ...MILL3_ISO, controlStyle: 'rs274ngc' };

const INCH: OffsetTable = {
	convention: 'reference-touch',
	units: 'inch',
	work: { G54: 1.25, G55: 2.5 },
	tools: { '3': -13.6182, '4': -12, '5': -11.5 }
};
const MM: OffsetTable = {
	convention: 'gauge-length',
	units: 'mm',
	work: { G54: -345.5, G55: -300, 'G54.1 P3': -310.25, 'G54.1 P4': -320.5 },
	tools: { '3': 101.6, '4': 88.25 }
};

const causesOf = (c: ReturnType<typeof compareReadback>, label: string): ReadbackCause[] =>
	c.rows.find((r) => r.label === label)!.causes.map((x) => x.kind);

describe('parseControlFile', () => {
	test('reads a saved ISO-style file: CRLF, %, O number, N numbers, comments, X/Y, wear, extended offsets', () => {
		// ISO-style mill control manual §1.2.10 [read, SOURCES.md 3]: G10 L10 = length geometry,
		// L11 = length wear, L12/L13 = diameter; G10 L2 P1–P6 = G54–G59, G10 L20 Pn = G54.1 Pn
		// [secondary]. Only the axes given change (NISTIR 6556 §3.5.5).
		const file = [
			'%',
			'O0100 (OFFSETS SAVED AT THE CONTROL)',
			'N10 G21',
			'N20 G10 L2 P1 X-400.000 Y-200.000 Z-345.500',
			'N30 G10 L2 P2 X0. Y0. Z-300.000 ; second fixture',
			'G10 L20 P3 X0 Y0 Z-310.250',
			'G10 L10 P3 R101.600',
			'G10 L11 P3 R-0.020',
			'G10 L12 P3 R5.000',
			'%'
		].join('\r\n');
		const read = parseControlFile(file, MILL3_ISO);
		expect(read.fileUnits).toBe('mm');
		expect(read.work).toEqual({ G54: -345.5, G55: -300, 'G54.1 P3': -310.25 });
		expect(read.tools).toEqual({ '3': 101.6 });
		expect(read.wear).toEqual({ '3': -0.02 });
		expect(read.skipped).toEqual([]);
		// X/Y of G10 L2/L20 (NIST RS274NGC v3 §3.5.5 for L2; L20 from secondary sources) and the
		// L12 radius/diameter geometry (ISO-style mill manual §1.2.10, SOURCES.md 3) are read.
		expect(read.xy).toEqual({
			G54: { x: -400, y: -200 },
			G55: { x: 0, y: 0 },
			'G54.1 P3': { x: 0, y: 0 }
		});
		expect(read.radius).toEqual({ '3': 5 });
		expect(read.radiusWear).toEqual({});
		expect(read.noPoint).toEqual([]); // X0 Y0 reads as zero either way: not flagged
		expect(read.notes).toEqual([]);
	});

	test('ISO-style: a value without a decimal point is a count of least increments, and flagged (inch and mm)', () => {
		// Common shop practice: ISO-style controls in their usual setting read "Z-14205" as
		// increments; the usual increments are 0.0001 in and 0.001 mm (M. Lynch, Modern Machine
		// Shop, SOURCES.md 6).
		const inch = parseControlFile('G20\nG10 L2 P1 Z-14205\nG10 L10 P3 R-136182', MILL1_ISO);
		expect(inch.work.G54).toBe(-1.4205);
		expect(inch.tools['3']).toBe(-13.6182);
		expect(
			inch.noPoint.map((f) => [f.register, f.text, f.value, f.otherReading, f.readAs])
		).toEqual([
			['G54', '-14205', -1.4205, -14205, 'increments'],
			['3', '-136182', -13.6182, -136182, 'increments']
		]);
		const mm = parseControlFile('G21\nG10 L2 P1 Z-14205', MILL3_ISO);
		expect(mm.work.G54).toBe(-14.205);
		expect(mm.noPoint[0]).toMatchObject({ line: 2, value: -14.205, otherReading: -14205 });
	});

	test('RS274NGC-style: a value without a decimal point is whole units, and flagged (inch and mm)', () => {
		// NIST RS274NGC v3 (NISTIR 6556), number syntax: a number is read as written, a decimal
		// point being optional [from memory for the exact section]; LinuxCNC reads it the same way.
		const inch = parseControlFile('G20 G90\nG10 L2 P1 Z2\nG10 L1 P3 Z-136182', MILL1_NGC);
		expect(inch.work.G54).toBe(2);
		expect(inch.tools['3']).toBe(-136182);
		expect(inch.noPoint.map((f) => [f.value, f.otherReading, f.readAs])).toEqual([
			[2, 0.0002, 'whole units'],
			[-136182, -13.6182, 'whole units']
		]);
		const mm = parseControlFile('G21\nG10 L2 P2 Z-300', MILL3_NGC);
		expect(mm.work.G55).toBe(-300);
		expect(mm.noPoint[0]).toMatchObject({ otherReading: -0.3, readAs: 'whole units' });
	});

	test('registers Datumkeep does not keep are listed, unreadable lines are skipped with the reason', () => {
		// NISTIR 6556 §3.5.5: G10 L2 P7–P9 = G59.1–G59.3 and P0 = the active system
		const file =
			'G20\nG10 L2 P7 Z1.0\nG10 L2 P0 Z0.5\nG91\nG10 L2 P1 Z0.1\nG90\nG10 L2 P1 Z1.2500\nT3 M6';
		const read = parseControlFile(file, MILL1_NGC);
		expect(read.other.map((o) => [o.label, o.value])).toEqual([
			['G59.1', 1],
			['G10 L2 P0 (the active or common work offset)', 0.5]
		]);
		expect(read.work).toEqual({ G54: 1.25 });
		expect(read.skipped.map((i) => i.field)).toEqual(['line 5', 'line 8']);
		expect(read.skipped[0].message).toMatch(/G91/);
		// on an RS274NGC-style control, L10/L20 set an offset from the current position (LinuxCNC manual)
		expect(
			parseControlFile('G20\nG10 L10 P1 R1.0\nG10 L2 P1 Z1.0', MILL1_NGC).skipped[0].message
		).toMatch(/from where the machine stands/);
	});

	test('without G20/G21 the machine units are assumed and said; a metric file on an inch machine is converted', () => {
		const assumed = parseControlFile('G10 L2 P1 Z1.2500', MILL1_NGC);
		expect(assumed.work.G54).toBe(1.25);
		expect(assumed.notes[0]).toMatch(/machine's units \(inch\)/);
		// 1 in = 25.4 mm exactly (NIST SP 811, App. B.8)
		const metric = parseControlFile('G21\nG10 L2 P1 Z31.750', MILL1_NGC);
		expect(metric.work.G54).toBe(1.25);
		expect(metric.fileUnits).toBe('mm');
	});

	test('refuses a file with no offsets at all, and non-text, with a reason', () => {
		expect(() => parseControlFile('%\n(NOTHING)\n%', MILL1_NGC)).toThrow(/holds no G10/);
		expect(() => parseControlFile('G0 X1.0', MILL1_NGC)).toThrow(OffsetInputError);
		expect(() => parseControlFile(42 as unknown as string, MILL1_NGC)).toThrow(/offset file/);
	});

	test('the strict load-program reader still refuses a value without a decimal point', () => {
		// same reader, load-program mode (parse-load-program.ts): load programs always write the point
		expect(() =>
			parseLoadProgram('G20 G90\n(CONVENTION REFERENCE-TOUCH)\nG10 L2 P1 Z1', MILL1_NGC)
		).toThrow(/line 3: has no decimal point/);
		expect(parseControlFile('G20\nG10 L2 P1 Z1', MILL1_NGC).work.G54).toBe(1);
	});
});

describe('compareReadback', () => {
	const compare = (
		machine: Machine,
		expected: OffsetTable,
		actual: OffsetTable['work'],
		tools = {}
	) => compareReadback({ machine, expected, actual: { work: actual, tools } });

	test('equal at the machine increment: 1.25 and 1.2500 are the same register value', () => {
		// Least increment 0.0001 in (M. Lynch, Modern Machine Shop, SOURCES.md 6)
		const c = compare(
			MILL1_NGC,
			INCH,
			{ G54: 1.25, G55: 2.50001 },
			{ 3: -13.6182, 4: -12, 5: -11.5 }
		);
		expect(c.different).toBe(0);
		expect(c.equal).toBe(5);
		expect(c.rows.every((r) => r.causes.length === 0)).toBe(true);
	});

	test.each([
		// Typing slips, common shop practice; the ×25.4 ratio from NIST SP 811 (1 in = 25.4 mm).
		['inch', 'sign-flip', MILL1_NGC, INCH, '3', 13.6182],
		['inch', 'transposed-digits', MILL1_NGC, INCH, '3', -13.6812],
		['inch', 'unit-slip', MILL1_NGC, INCH, '3', -345.9023],
		['inch', 'decimal-slip', MILL1_NGC, INCH, '3', -1.3618],
		['mm', 'sign-flip', MILL3_ISO, MM, '3', -101.6],
		['mm', 'transposed-digits', MILL3_ISO, MM, '3', 106.1],
		['mm', 'unit-slip', MILL3_ISO, MM, '3', 4],
		['mm', 'decimal-slip', MILL3_ISO, MM, '3', 10.16]
	] as const)('%s: %s is named', (_u, cause, machine, table, h, value) => {
		const c = compare(machine, table, table.work, { ...table.tools, [h]: value });
		expect(c.different).toBe(1);
		expect(causesOf(c, `H${h}`)[0]).toBe(cause);
		expect(c.rows.find((r) => r.label === `H${h}`)!.causes[0].text).toMatch(/computed/);
	});

	test('register off by one: G55’s value in G54 (mm), H4’s value in H5 (inch), G54.1 P4’s in P3', () => {
		// Common shop practice: typing into the neighbouring row of the offset page
		const mm = compare(MILL3_ISO, MM, { ...MM.work, G54: -300, 'G54.1 P3': -320.5 }, MM.tools);
		expect(causesOf(mm, 'G54')).toEqual(['off-by-one']);
		expect(mm.rows.find((r) => r.label === 'G54')!.causes[0].text).toMatch(/holds G55’s value/);
		expect(causesOf(mm, 'G54.1 P3')).toEqual(['off-by-one']);
		const inch = compare(MILL1_NGC, INCH, INCH.work, { 3: -13.6182, 4: -12, 5: -12 });
		expect(causesOf(inch, 'H5')).toEqual(['off-by-one']);
		expect(inch.rows.find((r) => r.label === 'H5')!.causes[0].text).toMatch(/H4’s value/);
	});

	test('stale: the control holds an older version of the register (inch and mm)', () => {
		// Common shop practice: a re-measured value computed but never entered at the control
		const inch = compareReadback({
			machine: MILL1_NGC,
			expected: INCH,
			actual: { work: INCH.work, tools: { ...INCH.tools, 3: -13.61 } },
			history: { tools: { '3': [-13.62, -13.61] } }
		});
		expect(causesOf(inch, 'H3')).toEqual(['stale']);
		const mm = compareReadback({
			machine: MILL3_ISO,
			expected: MM,
			actual: { work: { ...MM.work, G55: -299.5 }, tools: MM.tools },
			history: { work: { G55: [-299.5] } }
		});
		expect(causesOf(mm, 'G55')).toEqual(['stale']);
	});

	test('no decimal point: named as the cause when the value with its point would match (both conventions)', () => {
		// ISO-style reads "R101" as 101 increments = 0.101 mm (common shop practice, see the parser test)
		const isoFile = parseControlFile('G21\nG10 L10 P3 R101\nG10 L10 P4 R88.250', MILL3_ISO);
		const iso = compareReadback({
			machine: MILL3_ISO,
			expected: { ...MM, work: {}, tools: { '3': 101, '4': 88.25 } },
			actual: isoFile
		});
		expect(causesOf(iso, 'H3')[0]).toBe('no-decimal-point');
		expect(iso.rows.find((r) => r.label === 'H3')!.actual).toBe(0.101);
		// RS274NGC-style reads "Z-136182" as whole inches (NISTIR 6556 number syntax, from memory)
		const ngcFile = parseControlFile('G20\nG10 L1 P3 Z-136182', MILL1_NGC);
		const ngc = compareReadback({
			machine: MILL1_NGC,
			expected: { ...INCH, work: {}, tools: { '3': -13.6182 } },
			actual: ngcFile
		});
		expect(causesOf(ngc, 'H3')[0]).toBe('no-decimal-point');
		// equal, but still flagged: on a control set the other way it would read differently
		const ok = compareReadback({
			machine: MILL1_ISO,
			expected: { ...INCH, work: { G54: 1.25 }, tools: {} },
			actual: parseControlFile('G20\nG10 L2 P1 Z12500', MILL1_ISO)
		});
		expect(ok.rows[0]).toMatchObject({ status: 'equal', noPoint: { text: '12500' } });
	});

	test('a difference no slip explains says so and asks to read again', () => {
		const c = compare(MILL1_NGC, INCH, INCH.work, { ...INCH.tools, 3: -13.6 });
		expect(causesOf(c, 'H3')).toEqual(['unexplained']);
		expect(c.rows[2].difference).toBe(0.0182);
	});

	test('registers on one side only are listed apart; zeros at the control are only counted; wear not zero is listed', () => {
		const c = compareReadback({
			machine: MILL3_ISO,
			expected: MM,
			actual: {
				work: { G54: -345.5, G55: -300, G56: 0, G57: -12.5 },
				tools: { 3: 101.6, 4: 88.25, 9: 0 },
				wear: { 3: -0.02, 4: 0 }
			}
		});
		expect(c.onlyInDatumkeep.map((o) => o.label)).toEqual(['G54.1 P3', 'G54.1 P4']);
		expect(c.onlyAtControl.map((o) => [o.label, o.value])).toEqual([['G57', -12.5]]);
		expect(c.emptyAtControl).toBe(2);
		expect(c.wearNotZero).toEqual([{ register: '3', label: 'H3 wear', value: -0.02 }]);
		expect(c.rows.find((r) => r.label === 'H3')!.wear).toBe(-0.02);
	});

	test('extended work offsets: shown in the machine’s address form; beyond its count listed apart', () => {
		// ISO-style mill control manual §1.2.10 [secondary]: G10 L20 Pn = extended work offset n
		const machine: Machine = { ...MILL3_ISO, extendedWorkOffsets: 3, extendedAddress: 'G54 P' };
		const file = parseControlFile('G21\nG10 L20 P3 Z-310.250\nG10 L20 P4 Z-320.500', machine);
		expect(file.other.map((o) => o.label)).toEqual([
			'G54 P4 (the machine is set to 3 extended work offsets)'
		]);
		const c = compareReadback({
			machine,
			expected: { ...MM, work: { 'G54.1 P3': -310.25 }, tools: {} },
			actual: file
		});
		expect(c.rows.map((r) => [r.label, r.status])).toEqual([['G54 P3', 'equal']]);
	});

	test('refuses a table in the other unit and a register it does not know', () => {
		expect(() => compare(MILL1_NGC, MM, {})).toThrow(/machine's units/);
		expect(() => compare(MILL1_NGC, INCH, { G60: 1 })).toThrow(/actual.work.G60/);
	});

	test('property: a load program read back as a control file compares equal, every register', () => {
		// loadProgram writes what the control should hold; reading it back must find no difference.
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
				fc.boolean(),
				(style, units, convention, regIdx, hs, counts, crlf) => {
					const step = units === 'inch' ? 10000 : 1000;
					const regs = (style === 'iso' ? regsIso : regsRs).filter((_, k) => regIdx.includes(k));
					const table: OffsetTable = {
						convention,
						units,
						work: Object.fromEntries(regs.map((r, k) => [r, counts[k % 16] / step])),
						tools: Object.fromEntries(
							hs.map((h, k) => [
								String(h),
								k === 0 && convention === 'master-tool' ? 0 : counts[(k + 8) % 16] / step
							])
						),
						...(convention === 'master-tool' ? { masterTool: String(hs[0]) } : {})
					};
					const machine: Machine = {
						units,
						zTravel: units === 'inch' ? 20 : 510,
						convention,
						controlStyle: style
					};
					let text = loadProgram(machine, table, { programNumber: 7 });
					if (crlf) text = text.replace(/\n/g, '\r\n');
					const read = parseControlFile(text, machine);
					const c = compareReadback({ machine, expected: table, actual: read });
					expect(read.skipped).toEqual([]);
					expect(read.noPoint).toEqual([]);
					expect(c.different).toBe(0);
					expect(c.equal).toBe(regs.length + hs.length);
					expect(c.onlyAtControl).toEqual([]);
					expect(c.onlyInDatumkeep).toEqual([]);
				}
			)
		);
	});
});
