import { describe, expect, it } from 'vitest';
import { checkEdgeValue, checkWearValue } from './component-checks';
import { edgePosition } from './edges';
import { DEFAULT_POLICY } from './policy';

const inch = DEFAULT_POLICY.inch;

describe('checkEdgeValue', () => {
	it('says nothing for the first reading or a repeat within the jump tolerance', () => {
		const base = { units: 'inch' as const, policy: inch, register: 'G54', axis: 'X' as const };
		expect(checkEdgeValue({ ...base, value: -10, probeDiameter: 0.2, previous: null })).toEqual([]);
		expect(
			checkEdgeValue({ ...base, value: -10.0003, probeDiameter: 0.2, previous: { value: -10 } })
		).toEqual([]);
	});

	it('names a touch from the other side that moved the edge by one probe diameter (Stop)', () => {
		// Common shop practice: the radius is added from the minus side and subtracted from the
		// plus side, so the same reading entered with the wrong side lands one diameter away.
		const right = edgePosition({
			units: 'inch',
			touch: { machineCoordinate: -10.1, approachedFrom: 'minus' },
			probeDiameter: 0.2
		});
		const wrongSide = edgePosition({
			units: 'inch',
			touch: { machineCoordinate: -10.1, approachedFrom: 'plus' },
			probeDiameter: 0.2
		});
		expect(right).toBe(-10);
		expect(wrongSide).toBe(-10.2);
		const f = checkEdgeValue({
			units: 'inch',
			policy: inch,
			register: 'G54',
			axis: 'X',
			value: wrongSide,
			side: 'plus',
			probeDiameter: 0.2,
			previous: { value: right, side: 'minus' }
		});
		expect(f.map((x) => [x.kind, x.severity])).toEqual([['approach-side', 'stop']]);
		expect(f[0].message).toContain('about one probe diameter');
		expect(f[0].key).toBe('approach-side|fixture:G54 X');
	});

	it('calls a sign flip a Stop and an unexplained move a Caution jump', () => {
		const base = {
			units: 'mm' as const,
			policy: DEFAULT_POLICY.mm,
			register: 'G55',
			axis: 'Y' as const,
			probeDiameter: 6
		};
		const flip = checkEdgeValue({ ...base, value: 215.34, previous: { value: -215.34 } });
		expect(flip.map((x) => [x.kind, x.severity])).toEqual([['sign-flip', 'stop']]);
		const jump = checkEdgeValue({ ...base, value: -215.8, previous: { value: -215.34 } });
		expect(jump.map((x) => [x.kind, x.severity])).toEqual([['jump', 'caution']]);
	});
});

describe('checkWearValue', () => {
	// Our default limit, shop policy (SOURCES.md 14): 0.0100 in / 0.25 mm.
	it('lets wear up to the limit stand and stops anything beyond it', () => {
		expect(
			checkWearValue({ units: 'inch', h: '3', component: 'length-wear', value: -0.01 })
		).toEqual([]);
		const over = checkWearValue({
			units: 'inch',
			h: '3',
			component: 'length-wear',
			value: -0.0101
		});
		expect(over.map((x) => [x.kind, x.severity])).toEqual([['wear-limit', 'stop']]);
		expect(over[0].message).toContain('move the correction into the geometry');
		expect(
			checkWearValue({ units: 'mm', h: '7', component: 'radius-wear', value: 0.26 })
		).toHaveLength(1);
		expect(
			checkWearValue({ units: 'mm', h: '7', component: 'radius-wear', value: 0.2, limit: 0.1 })
		).toHaveLength(1);
	});
});
