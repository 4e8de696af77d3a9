import { describe, expect, it } from 'vitest';
import { parseToolCsv, toolsToCsv } from './csv';

describe('tool table CSV import', () => {
	it('reads good rows and names row, column and value for each bad one', () => {
		const csv = [
			't,h,description,holder,stickout',
			'1,1,1/2 in end mill,CAT40 shrink fit,1.375',
			'2,H2,spot drill,,',
			'3,3,,ER32,',
			'4,4,tap,,-1',
			'1,5,duplicate pocket,,'
		].join('\n');
		const r = parseToolCsv(csv, new Set());
		if (!r.ok) throw new Error(r.message);
		expect(r.rows.map((x) => x.row)).toEqual([2, 3, 4, 5, 6]);
		expect(r.rows[0].errors).toEqual([]);
		expect(r.rows[0].tool).toMatchObject({ t: 1, h: 1, stickout: 1.375, nominalLength: null });
		expect(r.rows[1].errors).toEqual([
			{
				column: 'h',
				value: 'H2',
				message: 'H number must be a whole number; "H2" is not a whole number: use digits only.'
			}
		]);
		expect(r.rows[2].errors[0]).toMatchObject({ column: 'description', value: '' });
		expect(r.rows[3].errors[0]).toMatchObject({
			column: 'stickout',
			value: '-1',
			message: 'Stickout must be zero or more.'
		});
		expect(r.rows[4].errors[0]).toMatchObject({
			column: 't',
			value: '1',
			message: 'T1 is also on row 2.'
		});
	});

	it('refuses an H number shared with another row or a tool in the rack, per row', () => {
		const csv = ['t,h,description', '1,5,drill', '2,5,tap', '3,9,reamer', '4,6,spot'].join('\n');
		const r = parseToolCsv(csv, new Set(), new Map([[9, 12]]));
		if (!r.ok) throw new Error(r.message);
		expect(r.rows.map((x) => x.errors.map((e) => e.message))).toEqual([
			[],
			['H5 is also on row 2 (T1); two tools cannot share one H number.'],
			['H9 is already the length offset of T12 in this rack; two tools cannot share one H number.'],
			[]
		]);
	});

	it('reads number cells strictly: a decimal comma or a unit is refused, not truncated', () => {
		const csv = [
			't,h,description,stickout',
			'1,1,drill,"1,5"',
			'2,2,tap,25 mm',
			'3,3,ream,1.25'
		].join('\n');
		const r = parseToolCsv(csv, new Set());
		if (!r.ok) throw new Error(r.message);
		expect(r.rows[0].errors[0].message).toContain('"1,5" has a comma');
		expect(r.rows[1].errors[0].message).toContain('"25 mm" has a unit');
		expect(r.rows[2].tool?.stickout).toBe(1.25);
	});

	it('refuses a T number already in the rack', () => {
		const r = parseToolCsv('t,h,description\n7,7,drill\n', new Set([7]));
		expect(r.ok && r.rows[0].errors[0].message).toBe("T7 is already in this machine's rack.");
	});

	it('refuses a file without the required columns, naming them', () => {
		const r = parseToolCsv('tool,length\n1,2\n', new Set());
		expect(r).toEqual({
			ok: false,
			message: expect.stringMatching(/^Missing columns: t, h, description\./)
		});
	});

	it('refuses a broken CSV and an empty one with a message, never an exception', () => {
		expect(parseToolCsv('t,h,description\n1,1,"unclosed\n', new Set()).ok).toBe(false);
		expect(parseToolCsv('t,h,description\n', new Set())).toEqual({
			ok: false,
			message: 'The file has a header but no tool rows.'
		});
	});

	it('exports the import columns first, so an export imports cleanly', () => {
		const csv = toolsToCsv([
			{
				t: 3,
				h: 3,
				description: 'drill, #7',
				holder: 'ER32',
				stickout: 3.25,
				nominalLength: null,
				offset: '-13.9877',
				units: 'in',
				measuredAt: '2026-11-20T10:00:00.000Z'
			}
		]);
		expect(csv.split('\n')[0]).toBe(
			't,h,description,holder,stickout,nominal_length,offset,units,measured_at'
		);
		const back = parseToolCsv(csv, new Set());
		expect(back.ok && back.rows[0].tool).toEqual({
			t: 3,
			h: 3,
			description: 'drill, #7',
			holder: 'ER32',
			stickout: 3.25,
			nominalLength: null
		});
	});
});
