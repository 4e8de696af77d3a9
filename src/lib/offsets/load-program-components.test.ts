import fc from 'fast-check';
import { describe, expect, test } from 'vitest';
import { OffsetInputError } from './errors';
import { loadProgram } from './load-program';
import { parseLoadProgram, parseLoadProgramWithComponents } from './parse-load-program';
import type { Machine, OffsetTable } from './types';

// Example data (invented): Mill 1 (inch, RS274NGC-style) and Mill 3 (metric, ISO-style).
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
	controlStyle: 'iso',
	extendedWorkOffsets: 48
};
const codeLines = (text: string) => text.split('\n').filter((l) => l && !l.startsWith('('));

describe('load programs with X/Y, radius and wear', () => {
	test('RS274NGC-style: X Y Z on one G10 L2 line, R beside Z on G10 L1, wear only in comments', () => {
		// NIST RS274NGC v3 (NISTIR 6556) §3.5.5: "G10 L2 P1 X3.5 Y17.2" sets G54's X and Y.
		// LinuxCNC G-code manual, G10 L1: R = tool radius (from memory).
		const table: OffsetTable = {
			convention: 'reference-touch',
			units: 'inch',
			work: { G54: 1.25 },
			tools: { '3': -13.2417 }
		};
		const text = loadProgram(MILL1, table, {
			components: {
				work: { G54: { x: -12.3, y: -7.1 }, G55: { x: -4.5 } },
				tools: { '3': { radius: 0.1875, lengthWear: -0.003 } }
			}
		});
		expect(codeLines(text)).toEqual([
			'%',
			'G20 G90',
			'G10 L2 P1 X-12.3000 Y-7.1000 Z1.2500',
			'G10 L2 P2 X-4.5000',
			'G10 L1 P3 Z-13.2417 R0.1875',
			'M30',
			'%'
		]);
		// The wear is never folded into the geometry: it is named for the operator instead.
		expect(text).toContain('(H3 LENGTH WEAR -0.0030)');
		expect(text).not.toContain('ONLY Z IS WRITTEN');
		const back = parseLoadProgramWithComponents(text, MILL1);
		expect(back.table).toEqual(parseLoadProgram(text, MILL1));
		expect(back.table.work).toEqual({ G54: 1.25 });
		expect(back.components.work).toEqual({ G54: { x: -12.3, y: -7.1 }, G55: { x: -4.5 } });
		expect(back.components.tools).toEqual({ '3': { radius: 0.1875 } });
	});

	test('ISO-style: G10 L11 length wear, L12/L13 radius geometry and wear, read back the same', () => {
		// ISO-style mill programming manual §1.2.10 (SOURCES.md 3): L10 length geometry, L11
		// length wear, L12 diameter geometry, L13 diameter wear.
		const table: OffsetTable = {
			convention: 'gauge-length',
			units: 'mm',
			work: { G54: -402.115, 'G54.1 P2': -388.4 },
			tools: { '3': 101.622 }
		};
		const components = {
			work: { G54: { x: -310.25, y: -180.5 }, 'G54.1 P2': { y: -90.125 } },
			tools: { '3': { radius: 6, lengthWear: -0.051, radiusWear: -0.012 } },
			cutterRegister: 'diameter' as const
		};
		const text = loadProgram(MILL3, table, { components });
		expect(codeLines(text)).toEqual([
			'%',
			'G21 G90',
			'G10 L2 P1 X-310.250 Y-180.500 Z-402.115',
			'G10 L20 P2 Y-90.125 Z-388.400',
			'G10 L10 P3 R101.622',
			'G10 L11 P3 R-0.051',
			'G10 L12 P3 R6.000',
			'G10 L13 P3 R-0.012',
			'M30',
			'%'
		]);
		expect(text).toContain('(CUTTER REGISTERS DIAMETER)');
		const back = parseLoadProgramWithComponents(text, MILL3);
		expect(back.table).toEqual(table);
		expect(back.components).toEqual(components);
	});

	test('a withheld component is left out and named; the rest of the register is written', () => {
		const table: OffsetTable = {
			convention: 'gauge-length',
			units: 'mm',
			work: {},
			tools: { '3': 101.622 }
		};
		const text = loadProgram(MILL3, table, {
			components: { tools: { '3': { lengthWear: -0.3, radiusWear: -0.01 } } },
			withheld: [
				{ section: 'tools', register: '3', component: 'length-wear', reason: 'wear beyond limit' }
			]
		});
		expect(codeLines(text)).toContain('G10 L10 P3 R101.622');
		expect(codeLines(text)).toContain('G10 L13 P3 R-0.010');
		expect(codeLines(text).some((l) => l.startsWith('G10 L11'))).toBe(false);
		expect(text).toContain('(WITHHELD H3 LENGTH WEAR WEAR BEYOND LIMIT)');
	});

	test('refuses a diameter register on a tool-table (G10 L1 R radius) control', () => {
		const table: OffsetTable = {
			convention: 'reference-touch',
			units: 'inch',
			work: {},
			tools: { '3': -13 }
		};
		expect(() =>
			loadProgram(MILL1, table, {
				components: { tools: { '3': { radius: 0.375 } }, cutterRegister: 'diameter' }
			})
		).toThrow(OffsetInputError);
	});

	test('the parser refuses X/Y on a tool line and an L11 without R', () => {
		const head = '%\n(CONVENTION GAUGE-LENGTH)\nG21 G90\n';
		expect(() =>
			parseLoadProgramWithComponents(`${head}G10 L10 P3 R1.000 X1.000\nM30\n%`, MILL3)
		).toThrow(/X and Y are written only on work offset lines/);
		expect(() => parseLoadProgramWithComponents(`${head}G10 L11 P3 Z1.000\nM30\n%`, MILL3)).toThrow(
			/writes the value with R/
		);
	});

	test('property: every X/Y, radius and wear at the resolution reads back the same (ISO-style)', () => {
		const micro = (lo: number, hi: number) =>
			fc.integer({ min: lo, max: hi }).map((n) => Number((n / 1000).toFixed(3)));
		fc.assert(
			fc.property(
				micro(-500000, 500000),
				micro(-500000, 500000),
				micro(0, 25000),
				micro(-250, 250),
				micro(-250, 250),
				fc.integer({ min: 1, max: 200 }),
				(x, y, radius, lw, rw, h) => {
					const table: OffsetTable = {
						convention: 'gauge-length',
						units: 'mm',
						work: { G55: -100 },
						tools: { [String(h)]: 120.5 }
					};
					const components = {
						work: { G55: { x, y } },
						tools: { [String(h)]: { radius, lengthWear: lw, radiusWear: rw } },
						cutterRegister: 'radius' as const
					};
					const back = parseLoadProgramWithComponents(
						loadProgram(MILL3, table, { components }),
						MILL3
					);
					expect(back.table).toEqual(table);
					expect(back.components).toEqual(components);
				}
			),
			{ numRuns: 200 }
		);
	});
});
