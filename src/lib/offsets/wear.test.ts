import { describe, expect, test } from 'vitest';
import { checkWearValue } from './component-checks';
import { effectiveValue, proposeWear, wearBeyondLimit, wearLimitIn } from './wear';

// Sizes are invented. Sign rules: G43 adds the length offset (NIST RS274NGC v3 §3.5.11), the
// control uses geometry + wear (ISO-style mill manual §1.2.10, SOURCES.md 3); cutter
// compensation offsets by the effective radius (NIST RS274NGC v3, from memory).
describe('length wear from a measured depth', () => {
	test('a pocket 0.002 in shallow: the tip must reach lower: length wear −0.0020', () => {
		// NIST RS274NGC v3 §3.5.11: a smaller length offset puts the tip lower
		const p = proposeWear({ units: 'inch', feature: 'depth', nominal: 0.5, measured: 0.498 });
		expect(p.register).toBe('length');
		expect(p.change).toBe(-0.002);
		expect(p.explanation).toBe(
			'the floor is 0.0020 in shallow: the tool must reach 0.0020 in lower: length wear −0.0020 in'
		);
	});

	test('a pocket 0.05 mm deep: the tool must stop higher: +0.050', () => {
		// NIST RS274NGC v3 §3.5.11
		const p = proposeWear({ units: 'mm', feature: 'depth', nominal: 12, measured: 12.05 });
		expect(p.change).toBe(0.05);
		expect(p.explanation).toMatch(/0\.050 mm deep: the tool must stop 0\.050 mm higher/);
	});

	test('adds to the current wear', () => {
		// ISO-style mill manual §1.2.10 (SOURCES.md 3): under G91 a G10 wear value adds to the one held
		const p = proposeWear({
			units: 'inch',
			feature: 'depth',
			nominal: 0.5,
			measured: 0.4985,
			currentWear: -0.001
		});
		expect(p.newWear).toBe(-0.0025);
	});
});

describe('radius and diameter wear from a measured size', () => {
	test('outside too big (boss 1.0040 for 1.0000): cut more, radius wear −0.0020', () => {
		// common shop practice: both sides cut, half the size error per side; smaller radius cuts more
		const p = proposeWear({ units: 'inch', feature: 'outside', nominal: 1, measured: 1.004 });
		expect(p.register).toBe('radius');
		expect(p.change).toBe(-0.002);
		expect(p.explanation).toMatch(
			/outside size is 0\.0040 in big: the tool must cut 0\.0020 in more on each side/
		);
	});

	test('outside too small: leave more, radius wear positive', () => {
		// common shop practice: half the size error per side; a larger radius leaves more
		const p = proposeWear({ units: 'mm', feature: 'outside', nominal: 40, measured: 39.96 });
		expect(p.change).toBe(0.02);
	});

	test('inside too small (bore 24.96 for 25.00): cut more, radius wear −0.020', () => {
		// common shop practice
		const p = proposeWear({ units: 'mm', feature: 'inside', nominal: 25, measured: 24.96 });
		expect(p.change).toBe(-0.02);
	});

	test('inside too big: leave more, radius wear positive', () => {
		// common shop practice: half the size error per side; a larger radius leaves more in a bore
		const p = proposeWear({ units: 'inch', feature: 'inside', nominal: 0.75, measured: 0.7524 });
		expect(p.change).toBe(0.0012);
	});

	test('a machine keeping diameters takes the whole size error', () => {
		// common shop practice: a diameter register carries twice the radius change
		const p = proposeWear({
			units: 'inch',
			feature: 'outside',
			nominal: 1,
			measured: 1.004,
			cutterRegister: 'diameter'
		});
		expect(p.register).toBe('diameter');
		expect(p.change).toBe(-0.004);
	});

	test('radius wear warns that it needs cutter compensation in the program', () => {
		// NIST RS274NGC v3: the radius offset acts only under G41/G42 cutter compensation (from memory)
		const p = proposeWear({ units: 'inch', feature: 'inside', nominal: 0.75, measured: 0.749 });
		expect(p.cautions.join(' ')).toMatch(/G41\/G42/);
	});
});

describe('the wear limit', () => {
	test('a new wear beyond 0.010 in is flagged: move it into geometry', () => {
		// our default, shop policy (SOURCES.md 14: no published number)
		const p = proposeWear({
			units: 'inch',
			feature: 'depth',
			nominal: 0.5,
			measured: 0.496,
			currentWear: -0.008
		});
		expect(p.newWear).toBe(-0.012);
		expect(p.beyondLimit).toBe(true);
		expect(p.cautions.join(' ')).toMatch(/move the correction into the geometry/);
	});

	test('wearBeyondLimit: inch 0.010 and mm 0.25 defaults, inclusive at the limit', () => {
		// our defaults, shop policy (SOURCES.md 14: no published number)
		expect(wearBeyondLimit(0.01, 'inch')).toBe(false);
		expect(wearBeyondLimit(-0.0101, 'inch')).toBe(true);
		expect(wearBeyondLimit(0.25, 'mm')).toBe(false);
		expect(wearBeyondLimit(0.251, 'mm')).toBe(true);
	});

	test("a shop's own limit, kept in mm, judges wear in either unit", () => {
		// The limit is the shop's choice (shop policy); 1 in = 25.4 mm exactly (NIST SP 811).
		expect(wearLimitIn('inch', null)).toBe(0.01);
		expect(wearLimitIn('mm', undefined)).toBe(0.25);
		expect(wearLimitIn('inch', 0.127)).toBe(0.005);
		expect(wearLimitIn('mm', 0.127)).toBe(0.127);
		// 0.25 mm on an inch machine: 0.0098425… in, to the engine's micro-unit.
		expect(wearLimitIn('inch', 0.25)).toBe(0.009843);
		expect(() => wearLimitIn('inch', 0)).toThrow(/greater than zero/);
		// A tighter shop limit (0.005 in) stops a wear the default lets stand.
		const limit = wearLimitIn('inch', 0.127);
		expect(wearBeyondLimit(-0.008, 'inch')).toBe(false);
		expect(wearBeyondLimit(-0.008, 'inch', limit)).toBe(true);
		expect(wearBeyondLimit(0.005, 'inch', limit)).toBe(false);
		const stop = checkWearValue({
			units: 'inch',
			h: '3',
			component: 'length-wear',
			value: -0.0051,
			limit
		});
		expect(stop.map((f) => [f.kind, f.severity])).toEqual([['wear-limit', 'stop']]);
		expect(stop[0].message).toContain('limit of 0.0050 in');
		const p = proposeWear({
			units: 'inch',
			feature: 'depth',
			nominal: 0.5,
			measured: 0.496,
			wearLimit: limit
		});
		expect(p.newWear).toBe(-0.004);
		expect(p.beyondLimit).toBe(false);
		const q = proposeWear({
			...{ units: 'inch', feature: 'depth', nominal: 0.5 },
			measured: 0.494,
			wearLimit: limit
		} as const);
		expect(q.beyondLimit).toBe(true);
		expect(q.cautions.join(' ')).toContain("the shop's limit of 0.0050 in");
		// A looser shop limit (1 mm) lets 0.4 mm of radius wear stand on a mm machine.
		expect(
			checkWearValue({
				units: 'mm',
				h: '7',
				component: 'radius-wear',
				value: 0.4,
				limit: wearLimitIn('mm', 1)
			})
		).toEqual([]);
	});

	test('a size error far beyond wear is refused as a wrong number', () => {
		expect(() =>
			proposeWear({ units: 'inch', feature: 'depth', nominal: 0.5, measured: 0.05 })
		).toThrow(/far more than wear/);
	});

	test('effective value = geometry + wear, exact at the increment', () => {
		// ISO-style mill manual §1.2.10 (SOURCES.md 3): geometry and wear registers are summed
		expect(effectiveValue(-14.2051, -0.0012, 'inch')).toBe(-14.2063);
		expect(effectiveValue(0.1, 0.2, 'mm')).toBe(0.3);
	});
});
