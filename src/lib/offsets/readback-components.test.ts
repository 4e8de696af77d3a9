import { describe, expect, test } from 'vitest';
import { loadProgram } from './load-program';
import { parseControlFile } from './parse-load-program';
import { compareReadback, type ExpectedComponents } from './readback';
import type { Machine, OffsetTable } from './types';

// Read-back beside Z (issue 20). Example data invented (DESIGN.md §9: Mill 1, inch).
// Sources of the forms read:
// - work offset X/Y: G10 L2 P1–P6 sets only the axes given (NIST RS274NGC v3, NISTIR 6556
//   §3.5.5); G10 L20 Pn for G54.1 Pn (ISO-style, secondary sources, SOURCES.md 3);
// - ISO-style G10 L10 length, L11 length wear, L12 radius/diameter geometry, L13 its wear
//   (ISO-style mill programming manual §1.2.10, SOURCES.md 3; whether L12/L13 hold radius or
//   diameter is a control parameter: common practice, from memory);
// - RS274NGC-style G10 L1 P_ Z_ R_: R is the tool table's radius (LinuxCNC manual, SOURCES.md 2,
//   from memory).
const MILL1_ISO: Machine = {
	name: 'Mill 1',
	units: 'inch',
	zTravel: 20,
	convention: 'reference-touch',
	controlStyle: 'iso'
};
const MILL1_NGC: Machine = { ...MILL1_ISO, controlStyle: 'rs274ngc' };
const TABLE: OffsetTable = {
	convention: 'reference-touch',
	units: 'inch',
	work: { G54: 1.25, G55: 2.5 },
	tools: { '3': -13.6182, '4': -12 }
};
const COMPONENTS: ExpectedComponents = {
	work: { G54: { x: -12.3, y: -7.1 }, G55: { x: -6.3, y: -7.1 } },
	tools: {
		'3': { radius: 0.1875, lengthWear: -0.003, radiusWear: -0.001 },
		'4': { radius: 0.25, lengthWear: 0.001 }
	}
};
const row = (c: ReturnType<typeof compareReadback>, label: string) =>
	c.rows.find((r) => r.label === label)!;

describe('read-back compares X/Y, radius and wear like Z', () => {
	test('ISO-style file: a different G54 X, radius, radius wear and length wear are named with causes', () => {
		const file = [
			'%',
			'G20',
			'G10 L2 P1 X-6.3000 Y-7.1000 Z1.2500', // G54 X holds G55's X: off by one
			'G10 L2 P2 X-6.3000 Y-7.1000 Z2.5000',
			'G10 L10 P3 R-13.6182',
			'G10 L11 P3 R-0.0030', // equal
			'G10 L12 P3 R4.7625', // 0.1875 in typed as mm: ×25.4
			'G10 L13 P3 R-0.0020', // an older radius wear (stale)
			'G10 L10 P4 R-12.0000',
			'G10 L11 P4 R0.0010',
			'G10 L12 P4 R0.2500',
			'%'
		].join('\n');
		const actual = parseControlFile(file, MILL1_ISO);
		const c = compareReadback({
			machine: MILL1_ISO,
			expected: TABLE,
			actual,
			expectedComponents: COMPONENTS,
			history: { components: { '3|radius-wear': [-0.002, 0] } }
		});
		// Z and lengths unchanged: all equal.
		expect(['G54', 'G55', 'H3', 'H4'].map((l) => row(c, l).status)).toEqual([
			'equal',
			'equal',
			'equal',
			'equal'
		]);
		const x = row(c, 'G54 X');
		expect(x).toMatchObject({
			component: 'x',
			status: 'different',
			expected: -12.3,
			actual: -6.3,
			difference: 6
		});
		expect(x.causes.map((k) => k.kind)).toContain('off-by-one');
		expect(x.causes[0].text).toContain('G55 X');
		expect(row(c, 'G54 Y').status).toBe('equal');
		expect(row(c, 'H3 radius').causes.map((k) => k.kind)).toEqual(['unit-slip']);
		const rw = row(c, 'H3 radius wear');
		expect(rw).toMatchObject({ status: 'different', expected: -0.001, actual: -0.002 });
		expect(rw.causes.map((k) => k.kind)).toEqual(['stale']);
		expect(row(c, 'H3 length wear').status).toBe('equal');
		expect(row(c, 'H4 length wear').status).toBe('equal');
		// Wear Datumkeep keeps is compared, so it is not listed again as "wear not zero".
		expect(c.wearNotZero).toEqual([]);
		// H4 has no radius wear in Datumkeep; the control has none either: nothing to say.
		expect(c.onlyInDatumkeep).toEqual([]);
		expect(c.componentsNotRead).toEqual([]);
		expect(c.different).toBe(3);
		// Z 4, X 1 (G55), Y 2, radius 1 (H4), length wear 2.
		expect(c.equal).toBe(4 + 1 + 2 + 1 + 2);
	});

	test('RS274NGC-style file: X/Y on L2 and the radius as R on L1; wear not in the file is said, not guessed', () => {
		const file = [
			'G20 G90',
			'G10 L2 P1 X-12.3000 Y7.1000 Z1.2500', // Y sign flipped
			'G10 L2 P2 X-6.3000 Y-7.1000 Z2.5000',
			'G10 L1 P3 Z-13.6182 R0.1875',
			'G10 L1 P4 Z-12.0000 R0.2500'
		].join('\n');
		const c = compareReadback({
			machine: MILL1_NGC,
			expected: TABLE,
			actual: parseControlFile(file, MILL1_NGC),
			expectedComponents: COMPONENTS
		});
		expect(row(c, 'G54 Y').causes.map((k) => k.kind)).toEqual(['sign-flip']);
		expect(row(c, 'G54 X').status).toBe('equal');
		expect(row(c, 'H3 radius').status).toBe('equal');
		// NIST RS274NGC v3 keeps no wear registers: the file has none, so none is compared.
		expect(c.componentsNotRead).toEqual(['length-wear', 'radius-wear']);
		expect(c.rows.some((r) => r.component === 'length-wear')).toBe(false);
	});

	test('an X written without a decimal point: flagged, and named as the cause when it explains the difference', () => {
		// ISO-style controls in their usual setting read it as increments (common shop
		// practice, SOURCES.md 6); RS274NGC-style as whole units (NISTIR 6556 number syntax).
		const iso = compareReadback({
			machine: MILL1_ISO,
			expected: TABLE,
			actual: parseControlFile('G20\nG10 L2 P1 X-123000 Z1.25', MILL1_ISO),
			expectedComponents: { work: { G54: { x: -12.3 } } }
		});
		expect(row(iso, 'G54 X')).toMatchObject({ status: 'equal', noPoint: { text: '-123000' } });
		const ngc = compareReadback({
			machine: MILL1_NGC,
			expected: TABLE,
			actual: parseControlFile('G20\nG10 L2 P1 X-123000 Z1.25', MILL1_NGC),
			expectedComponents: { work: { G54: { x: -12.3 } } }
		});
		expect(row(ngc, 'G54 X').causes[0].kind).toBe('no-decimal-point');
	});

	test('a component Datumkeep keeps but the control does not hold is listed apart', () => {
		const c = compareReadback({
			machine: MILL1_ISO,
			expected: TABLE,
			actual: parseControlFile('G20\nG10 L2 P2 X-6.3 Y-7.1 Z2.5\nG10 L2 P1 Z1.25', MILL1_ISO),
			expectedComponents: { work: { G54: { x: -12.3 }, G55: { x: -6.3 } } }
		});
		expect(c.onlyInDatumkeep.filter((o) => o.component)).toEqual([
			expect.objectContaining({ label: 'G54 X', component: 'x', value: -12.3 })
		]);
	});

	test('a load program with components read back as a control file compares equal (ISO-style)', () => {
		const text = loadProgram(MILL1_ISO, TABLE, {
			components: {
				work: COMPONENTS.work,
				tools: COMPONENTS.tools,
				cutterRegister: 'radius'
			}
		});
		const c = compareReadback({
			machine: MILL1_ISO,
			expected: TABLE,
			actual: parseControlFile(text, MILL1_ISO),
			expectedComponents: COMPONENTS
		});
		expect(c.different).toBe(0);
		expect(c.rows.filter((r) => r.component).map((r) => r.label)).toEqual([
			'G54 X',
			'G55 X',
			'G54 Y',
			'G55 Y',
			'H3 radius',
			'H4 radius',
			'H3 length wear',
			'H4 length wear',
			'H3 radius wear'
		]);
		expect(c.onlyInDatumkeep).toEqual([]);
	});
});
