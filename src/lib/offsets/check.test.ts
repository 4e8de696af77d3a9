import { describe, expect, test } from 'vitest';
import { checkOffsets } from './check';
import { OffsetInputError } from './errors';
import { TABLE_FINDING_KINDS, type Finding } from './findings';
import { DEFAULT_POLICY } from './policy';
import type { CheckInput, OffsetTable } from './types';

// Example data (invented): Fernhill Precision's Mill 1 — inch, 20 in Z travel, Z home at 0 so the
// valid spindle Z is [−20, 0] (common shop practice), reference-touch convention.
const NOW = '2025-03-10T12:00:00Z';
const DAY = 86_400_000;
const ago = (days: number) => new Date(Date.parse(NOW) - days * DAY).toISOString();
const TABLE: OffsetTable = {
	convention: 'reference-touch',
	units: 'inch',
	work: { G54: 1.25, G55: 3 },
	tools: { '1': -13, '2': -14, '3': -13.5 }
};
function base(): CheckInput {
	return {
		machine: {
			id: 'm1',
			name: 'Mill 1',
			units: 'inch',
			zTravel: 20,
			convention: 'reference-touch'
		},
		table: structuredClone(TABLE),
		history: {
			work: { G54: [{ value: 1.25, at: ago(1) }], G55: [{ value: 3, at: ago(1) }] },
			tools: {
				'1': [
					{ value: -13.0001, at: ago(20) },
					{ value: -13, at: ago(2) }
				],
				'2': [{ value: -14, at: ago(2) }],
				'3': [{ value: -13.5, at: ago(2) }]
			}
		},
		referenceEstablishedAt: ago(40),
		now: NOW,
		setups: [
			{
				id: 'pump-a',
				name: 'Pump housing op A',
				units: 'inch',
				fixtures: [
					{ id: 'vise', register: 'G54', zeroHeight: 1.25 },
					{ id: 'plate', register: 'G55', zeroHeight: 3 }
				],
				tools: [{ h: '1' }, { h: '2' }, { h: '3' }]
			}
		],
		used: { work: ['G54', 'G55'], tools: ['1', '2', '3'] }
	};
}
const kinds = (f: Finding[]) => f.map((x) => x.kind);
function only(findings: Finding[], kind: string): Finding {
	const hit = findings.filter((f) => f.kind === kind);
	expect(hit, `expected one ${kind} in ${JSON.stringify(kinds(findings))}`).toHaveLength(1);
	return hit[0];
}

describe('checkOffsets', () => {
	test('a clean table gives no finding', () => {
		expect(checkOffsets(base())).toEqual([]);
	});

	test('sign: a positive reference-touch tool offset', () => {
		// ETSU ENTC 3710 ch. 11: the tool length offset is the −Z distance from home to the reference
		const i = base();
		i.table.tools['2'] = 14;
		i.history = undefined;
		const f = only(checkOffsets(i), 'sign');
		expect(f).toMatchObject({ severity: 'stop', subject: { type: 'tool', h: '2' } });
		expect(f.message).toMatch(/H2 is 14\.0000 in/);
	});

	test('sign: a positive gauge-length work offset', () => {
		// Modern Machine Shop, "CNC Tech Talk", Jan 2017: gauge-length G54 Z is a large negative distance
		const i = base();
		i.machine.convention = 'gauge-length';
		i.table = {
			convention: 'gauge-length',
			units: 'inch',
			work: { G54: 13.75 },
			tools: { '1': 2 }
		};
		i.history = undefined;
		i.setups = undefined;
		i.used = undefined;
		expect(only(checkOffsets(i), 'sign').subject).toEqual({ type: 'fixture', register: 'G54' });
	});

	test('out-of-travel: spindle Z at program zero above the travel, and a clearance plane above it', () => {
		// NISTIR 6556 composition: spindle Z = W + H. Example data: H2 = −2 (a 13 in tool with R = −15);
		// G55 3 + (−2) = +1 > 0, the top of travel (Z homes at 0, common shop practice)
		const i = base();
		i.table.tools['2'] = -2;
		i.history = undefined;
		const f = checkOffsets(i).filter((x) => x.kind === 'out-of-travel');
		expect(f.map((x) => [x.subject, x.severity])).toEqual([
			[{ type: 'setup', id: 'pump-a', register: 'G55', h: '2' }, 'stop'],
			// G54 at −0.75 is inside, but its clearance plane (3 + 1 − 1.25 = 2.75 above zero) is not
			[{ type: 'setup', id: 'pump-a', register: 'G54', h: '2' }, 'caution']
		]);
		expect(f[0].data?.spindleZ).toBe(1);
	});

	test('out-of-travel: a single value beyond the whole travel', () => {
		// ETSU ENTC 3710 ch. 11: a reference-touch offset is a −Z distance from home, so it cannot
		// be longer than the 20 in travel (Z home at 0, common shop practice)
		const i = base();
		i.table.tools['3'] = -25;
		i.history = undefined;
		i.setups = undefined;
		expect(only(checkOffsets(i), 'out-of-travel').subject).toEqual({ type: 'tool', h: '3' });
	});

	test('unit-slip: a value typed in mm on an inch machine', () => {
		// NIST SP 811: 25.4 mm per inch; G54 1.25 in retyped as 31.75 (its mm value)
		const i = base();
		i.table.work.G54 = 31.75;
		i.table.tools = { '1': -13 };
		i.setups = undefined;
		i.used = undefined;
		const f = only(checkOffsets(i), 'unit-slip');
		expect(f).toMatchObject({ severity: 'stop', subject: { type: 'fixture', register: 'G54' } });
	});

	test('decimal-slip: point one place off', () => {
		// common shop practice: a decimal point typed one place off gives 10× or 1/10 of the value
		// (no published source; DESIGN.md §3 names the check)
		const i = base();
		i.table.tools['3'] = -1.35;
		i.setups = undefined;
		expect(only(checkOffsets(i), 'decimal-slip').subject).toEqual({ type: 'tool', h: '3' });
	});

	test('sign-flip: a minus sign added to a master-tool length offset', () => {
		// DESIGN.md §2 master-tool row: H = L_i − L_m, so the sign is the tool's length against the
		// master's; a dropped minus sign is the same size, other sign (common shop practice)
		const i = base();
		i.machine.convention = 'master-tool';
		i.table = {
			convention: 'master-tool',
			units: 'inch',
			work: { G54: -11.75 },
			tools: { '1': 0, '2': -1.0002 },
			masterTool: '1'
		};
		i.history = { tools: { '2': [{ value: 1.0002, at: ago(3) }] } };
		i.setups = undefined;
		i.used = undefined;
		expect(only(checkOffsets(i), 'sign-flip')).toMatchObject({
			severity: 'stop',
			subject: { type: 'tool', h: '2' }
		});
	});

	test('transposed-digits: two neighbouring digits swapped', () => {
		// common shop practice: two neighbouring digits keyed in swapped (no published source)
		const i = base();
		i.table.tools['2'] = -14.0021; // recorded −14.0012
		i.history!.tools!['2'] = [{ value: -14.0012, at: ago(2) }];
		i.setups = undefined;
		expect(only(checkOffsets(i), 'transposed-digits').message).toMatch(/swapped/);
	});

	test('jump: changed beyond the tolerance with no tool change', () => {
		// common shop practice: a tool's length does not change unless the tool does; the
		// tolerance is the shop's (our default policy, no published number)
		const i = base();
		i.table.tools['1'] = -13.02;
		i.setups = undefined;
		const f = only(checkOffsets(i), 'jump');
		expect(f).toMatchObject({ severity: 'caution', subject: { type: 'tool', h: '1' } });
	});

	test('jump: excused when a tool change was recorded with the new value', () => {
		const i = base();
		i.table.tools['1'] = -13.02;
		i.history!.tools!['1'].push({ value: -13.02, at: ago(0.5), toolChange: true });
		i.setups = undefined;
		expect(kinds(checkOffsets(i))).not.toContain('jump');
	});

	test('a tool change softens a slip to a caution', () => {
		const i = base();
		i.table.tools['3'] = -1.35;
		i.history!.tools!['3'].push({ value: -1.35, at: ago(0.1), toolChange: true });
		i.setups = undefined;
		expect(only(checkOffsets(i), 'decimal-slip').severity).toBe('caution');
	});

	test('stale-age: older than the shop limit', () => {
		// shop policy with our default limit: no published number exists (SOURCES.md §14)
		const i = base();
		i.history!.tools!['2'] = [{ value: -14, at: ago(DEFAULT_POLICY.inch.toolMaxAgeDays + 1) }];
		expect(only(checkOffsets(i), 'stale-age')).toMatchObject({
			severity: 'caution',
			subject: { type: 'tool', h: '2' }
		});
		// the shop may allow longer
		expect(kinds(checkOffsets({ ...i, policy: { toolMaxAgeDays: 60 } }))).not.toContain(
			'stale-age'
		);
	});

	test('stale-reference: measured before the reference was re-established', () => {
		// ETSU ENTC 3710 ch. 11: reference-touch tool offsets are measured to the reference
		// surface, so one measured before it was re-established is against the old surface
		const i = base();
		i.referenceEstablishedAt = ago(1.5); // after the tools (2 days) but before the work offsets (1 day)
		const f = checkOffsets(i).filter((x) => x.kind === 'stale-reference');
		expect(f.map((x) => x.subject)).toEqual([
			{ type: 'tool', h: '1' },
			{ type: 'tool', h: '2' },
			{ type: 'tool', h: '3' }
		]);
	});

	test('stale-reference: gauge-length tool lengths do not depend on the reference', () => {
		// Modern Machine Shop, "CNC Tech Talk", Jan 2017: gauge-length offsets are the tool's own
		// length; only G54 Z (R + h, DESIGN.md §2) holds the reference
		const i = base();
		i.machine.convention = 'gauge-length';
		i.table = {
			convention: 'gauge-length',
			units: 'inch',
			work: { G54: -13.75 },
			tools: { '1': 2 }
		};
		i.history = {
			work: { G54: [{ value: -13.75, at: ago(2) }] },
			tools: { '1': [{ value: 2, at: ago(2) }] }
		};
		i.referenceEstablishedAt = ago(1);
		i.setups = undefined;
		i.used = undefined;
		expect(
			checkOffsets(i)
				.filter((f) => f.kind === 'stale-reference')
				.map((f) => f.subject.type)
		).toEqual(['fixture']);
	});

	test('duplicate-register: the same register typed twice in the table', () => {
		// NISTIR 6556 §3.2.2: each coordinate system has one origin, so two values for G54 cannot
		// both be right
		const i = base();
		i.table.work['g54'] = 1.2;
		expect(only(checkOffsets(i), 'duplicate-register')).toMatchObject({
			severity: 'stop',
			subject: { type: 'fixture', register: 'G54' }
		});
	});

	test('duplicate-register: two fixtures of a setup on one register', () => {
		// NISTIR 6556 §3.2.2: one origin per coordinate system, so two fixtures cannot share one
		const i = base();
		i.setups![0].fixtures[1].register = 'G54';
		const f = only(checkOffsets(i), 'duplicate-register');
		expect(f.subject).toEqual({ type: 'setup', id: 'pump-a', register: 'G54' });
		expect(f.message).toMatch(/vise and plate/);
	});

	test('unset: used but missing, or zero where zero is impossible', () => {
		const i = base();
		i.used = { work: ['G54', 'G56'], tools: ['1'] };
		// a control shows 0 for a never-set offset (from memory); NISTIR 6556 §3.5.11: H0 is zero
		// offset, which a reference-touch tool cannot have (its offset is a −Z distance, ETSU ch. 11)
		i.table.tools['3'] = 0;
		const f = checkOffsets(i).filter((x) => x.kind === 'unset');
		expect(f.map((x) => x.subject)).toEqual([
			{ type: 'fixture', register: 'G56' },
			{ type: 'tool', h: '3' }
		]);
		expect(f.every((x) => x.severity === 'stop')).toBe(true);
	});

	test('every table kind has a test above that makes it fire', () => {
		expect(TABLE_FINDING_KINDS).toHaveLength(11);
	});

	test('keys are stable for the same problem', () => {
		const i = base();
		i.table.tools['1'] = -13.02;
		expect(checkOffsets(i)[0].key).toBe(checkOffsets(structuredClone(i))[0].key);
		expect(checkOffsets(i)[0].key).toBe('jump|tool:H1');
	});

	test('bad input is refused: NaN, unknown register, wrong convention', () => {
		const nan = base();
		nan.table.work.G54 = Number.NaN;
		expect(() => checkOffsets(nan)).toThrow(/input.table.work.G54: is not a number/);
		const reg = base();
		reg.used = { work: ['G60'] };
		expect(() => checkOffsets(reg)).toThrow(OffsetInputError);
		const conv = base();
		conv.machine.convention = 'gauge-length';
		expect(() => checkOffsets(conv)).toThrow(/convention/);
		const travel = base();
		travel.machine.zTravel = -5;
		expect(() => checkOffsets(travel)).toThrow(/zTravel/);
	});
});

describe('checkOffsets input errors', () => {
	test('missing and malformed timestamps and travel say why', () => {
		const i = base();
		expect(() => checkOffsets({ ...i, now: undefined as never })).toThrow(/input.now: is required/);
		expect(() => checkOffsets({ ...i, now: 'yesterday' })).toThrow(
			/input.now: must be an ISO 8601 date-time/
		);
		expect(() => checkOffsets({ ...i, machine: { ...i.machine, zTravel: Infinity } })).toThrow(
			/input.machine.zTravel: is infinite/
		);
	});
});
