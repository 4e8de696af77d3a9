import { describe, expect, it } from 'vitest';
import { resolvePolicy } from './policy';
import { blockHeightSlip, nameSlip, slipsIntoRange } from './slips';
import { checkOffsets } from './check';

/**
 * Slip naming. The slips themselves are common shop practice (no published list): a minus sign
 * added or dropped, the other unit (1 in = 25.4 mm exactly, NIST SP 811), the decimal point one
 * place off, two neighbouring digits swapped. Each case names the rule and the value meant.
 */
const inch = resolvePolicy(undefined, 'inch');
const mm = resolvePolicy(undefined, 'mm');

describe('nameSlip (typed value against the value expected)', () => {
	const cases = [
		// [units, typed, previous, rule, corrected]
		['inch', 14.7502, -14.7502, 'sign', -14.7502],
		['inch', -374.655, -14.7502, '×25.4', -14.7502],
		['inch', -1.475, -14.7502, '÷10', -14.75],
		['inch', -147.502, -14.7502, '×10', -14.7502],
		['inch', -14.7052, -14.7502, 'transposed', -14.7502],
		['mm', 289.835, -289.835, 'sign', -289.835],
		['mm', -11.411, -289.835, '÷25.4', -289.839],
		['mm', -28.984, -289.835, '÷10', -289.84],
		['mm', -2898.35, -289.835, '×10', -289.835],
		['mm', -289.385, -289.835, 'transposed', -289.835]
	] as const;
	for (const [units, typed, previous, rule, corrected] of cases) {
		it(`${units}: ${typed} after ${previous} is named ${rule} (common shop practice)`, () => {
			const policy = units === 'inch' ? inch : mm;
			const resolution = units === 'inch' ? 0.0001 : 0.001;
			const slip = nameSlip(typed, previous, units, resolution, policy);
			expect(slip?.rule).toBe(rule);
			expect(slip?.corrected).toBeCloseTo(corrected, 6);
			expect(slip?.words.length).toBeGreaterThan(10);
		});
	}
	it('an ordinary small change is no slip', () => {
		expect(nameSlip(-14.7512, -14.7502, 'inch', 0.0001, inch)).toBeNull();
	});
});

describe('slipsIntoRange (a machine Z outside the travel)', () => {
	it('inch: -147.5020 on a 20 in travel is the point one place right, -14.7502 meant', () => {
		const [first] = slipsIntoRange(-147.502, { min: -20, max: 0 }, 'inch', 0.0001);
		expect(first).toMatchObject({ rule: '×10', corrected: -14.7502, kind: 'decimal-slip' });
	});
	it('inch: +14.7502 is a dropped minus sign', () => {
		const [first] = slipsIntoRange(14.7502, { min: -20, max: 0 }, 'inch', 0.0001);
		expect(first).toMatchObject({ rule: 'sign', corrected: -14.7502 });
	});
	it('inch: -374.6551 is millimetres typed on an inch machine', () => {
		const s = slipsIntoRange(-374.6551, { min: -20, max: 0 }, 'inch', 0.0001);
		expect(s.map((x) => x.rule)).toContain('×25.4');
		expect(s.find((x) => x.rule === '×25.4')?.corrected).toBe(-14.7502);
	});
	it('mm: -11.411 stays inside a 510 mm travel, so no slip is guessed', () => {
		expect(slipsIntoRange(-11.411, { min: -510, max: 0 }, 'mm', 0.001)).toEqual([]);
	});
	it('mm: -2898.35 on 510 mm travel is the point one place right', () => {
		const [first] = slipsIntoRange(-2898.35, { min: -510, max: 0 }, 'mm', 0.001);
		expect(first).toMatchObject({ rule: '×10', corrected: -289.835 });
	});
});

describe('blockHeightSlip (a block or stack typed wrong moves the offset by the difference)', () => {
	it('inch: a 1.0000 in block typed as 10 moves G54 by 9 in, past the 0.0050 in jump limit', () => {
		// offset = reading − block: with the right block G54 would be 2.8125; typed 10 gives −6.1875
		const s = blockHeightSlip({
			block: 10,
			offset: -6.1875,
			previousOffset: 2.8125,
			zTravel: 20,
			units: 'inch',
			resolution: 0.0001,
			policy: inch
		});
		expect(s).toMatchObject({ rule: '×10', corrected: 1, correctedOffset: 2.8125, moved: -9 });
	});
	it('inch: 25.4 typed for a 1 in block on an inch machine is named a unit slip (no history)', () => {
		const s = blockHeightSlip({
			block: 25.4,
			offset: -39.6733,
			previousOffset: null,
			zTravel: 20,
			units: 'inch',
			resolution: 0.0001,
			policy: inch
		});
		expect(s).toMatchObject({ rule: '×25.4', kind: 'unit-slip', corrected: 1 });
	});
	it('mm: a 25 mm block typed 2.5 is the point one place left', () => {
		const s = blockHeightSlip({
			block: 2.5,
			offset: -262.835,
			previousOffset: -285.335,
			zTravel: 510,
			units: 'mm',
			resolution: 0.001,
			policy: mm
		});
		expect(s).toMatchObject({ rule: '÷10', corrected: 25, correctedOffset: -285.335 });
	});
	it('mm: a 1 in block typed in inches (1) on a metric machine is named ÷25.4', () => {
		const s = blockHeightSlip({
			block: 1,
			offset: -261.435,
			previousOffset: -285.835,
			zTravel: 510,
			units: 'mm',
			resolution: 0.001,
			policy: mm
		});
		expect(s).toMatchObject({ rule: '÷25.4', corrected: 25.4 });
	});
	it('a change within the jump limit is not a slip', () => {
		expect(
			blockHeightSlip({
				block: 1,
				offset: 2.8127,
				previousOffset: 2.8125,
				zTravel: 20,
				units: 'inch',
				resolution: 0.0001,
				policy: inch
			})
		).toBeNull();
	});
});

describe('checkOffsets names the corrected value in its slip findings', () => {
	it('a ÷10 tool length is a Stop that says which value was likely meant', () => {
		const findings = checkOffsets({
			machine: { units: 'inch', zTravel: 20, convention: 'reference-touch' },
			table: { convention: 'reference-touch', units: 'inch', work: {}, tools: { '6': -1.3502 } },
			history: {
				tools: {
					'6': [
						{ value: -13.5018, at: '2026-12-01T08:00:00Z' },
						{ value: -1.3502, at: '2026-12-03T08:00:00Z' }
					]
				}
			},
			now: '2026-12-03T09:00:00Z'
		});
		const f = findings.find((x) => x.kind === 'decimal-slip');
		expect(f?.severity).toBe('stop');
		expect(f?.message).toContain('-13.5020 in was likely meant');
		expect(f?.data).toMatchObject({ slip: '÷10', corrected: -13.502 });
	});
});
