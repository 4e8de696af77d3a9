import { describe, expect, it } from 'vitest';
import type { MachineRecord } from '../offsets/machine-state';
import { parseLength, type ReadingIssue } from './record';

// The reading forms read lengths through the same strict reader as every other form
// (issue 13): "1,000" in the block height used to be read as 1.000.
const mill = (units: 'inch' | 'mm', resolution: number): MachineRecord => ({
	id: 1,
	name: 'Mill 1',
	units,
	zTravel: units === 'inch' ? 20 : 510,
	resolution,
	controlStyle: 'iso',
	convention: 'reference-touch',
	masterToolH: null,
	extendedWorkOffsets: 0,
	extendedAddress: 'G54.1 P',
	notes: '',
	createdAt: '2026-12-01T00:00:00Z',
	hasPhoto: false
});

function read(raw: string, machine = mill('inch', 0.0001)) {
	const issues: ReadingIssue[] = [];
	const value = parseLength(machine, 'blockHeight', 'Block height', raw, issues);
	return { value, issues };
}

describe('parseLength (reading forms)', () => {
	it.each([
		['1,000', 'without thousands separators'],
		['2,5', 'use a point for decimals'],
		['2.5 in', 'has a unit'],
		['2.5abc', 'is not a number']
	])('refuses "%s" with the field and why, storing nothing', (raw, why) => {
		const r = read(raw);
		expect(r.value).toBeUndefined();
		expect(r.issues).toHaveLength(1);
		expect(r.issues[0].field).toBe('blockHeight');
		expect(r.issues[0].message).toContain('Block height must be a number');
		expect(r.issues[0].message).toContain(why);
	});

	it('keeps what was typed exactly, within the control increment', () => {
		expect(read('2.0001')).toEqual({ value: 2.0001, issues: [] });
		expect(read('\u22121.5')).toEqual({ value: -1.5, issues: [] });
		expect(read('2.00015').issues[0].message).toMatch(/has 5 decimals/);
	});

	it('never keeps more decimals than the database holds (4), even on a 0.00005 in machine', () => {
		const fine = mill('inch', 0.00005);
		expect(read('1.2345', fine)).toEqual({ value: 1.2345, issues: [] });
		expect(read('1.23455', fine).issues[0].message).toMatch(/type at most 4/);
	});
});
