import { describe, expect, it } from 'vitest';
import { gateOffsets } from './gate';
import { loadProgram } from './load-program';
import { parseLoadProgram } from './parse-load-program';
import { FINDING_TITLE, findingTitle, TITLED_KINDS } from './finding-titles';

const machine = {
	name: 'Mill 2',
	units: 'inch' as const,
	zTravel: 20,
	convention: 'reference-touch' as const,
	controlStyle: 'iso' as const
};

describe('gateOffsets: one verdict per register', () => {
	const input = {
		machine,
		table: {
			convention: 'reference-touch' as const,
			units: 'inch' as const,
			work: { G54: 1.8251 },
			tools: { '1': -14.2733, '6': -1.3502 }
		},
		history: {
			work: { G54: [{ value: 1.8251, at: '2026-11-24T08:00:00Z' }] },
			tools: {
				'1': [{ value: -14.2733, at: '2026-11-24T08:00:00Z' }],
				'6': [
					{ value: -13.5018, at: '2026-12-01T08:00:00Z' },
					{ value: -1.3502, at: '2026-12-03T08:00:00Z' }
				]
			}
		},
		referenceEstablishedAt: '2026-11-30T08:00:00Z',
		now: '2026-12-03T09:00:00Z',
		used: { tools: ['7'] }
	};
	const gate = gateOffsets(input);
	it('stale (measured before the reference was re-set), stop (slip), not measured', () => {
		// ETSU ENTC 3710 ch. 11: reference-touch offsets are measured to the reference, so older
		// ones are stale; −1.3502 after −13.5018 is the decimal point one place off (common shop practice)
		expect(gate.work.G54.status).toBe('stale');
		expect(gate.tools['1'].status).toBe('stale');
		expect(gate.tools['6'].status).toBe('stop');
		expect(gate.tools['6'].findings[0].kind).toBe('decimal-slip');
		expect(gate.tools['7'].status).toBe('unset');
	});
});

describe('loadProgram with withheld registers and warnings', () => {
	const table = {
		convention: 'reference-touch' as const,
		units: 'inch' as const,
		work: { G54: 1.8251 },
		tools: { '1': -14.2733, '6': -13.5018 }
	};
	it('leaves withheld registers out and names them with the reason', () => {
		const text = loadProgram(machine, table, {
			withheld: [
				{
					section: 'tools',
					register: '1',
					reason: 'stale: measured before the reference was re-set'
				}
			]
		});
		expect(text).not.toMatch(/G10 L10 P1 /);
		expect(text).toContain('(WITHHELD H1 STALE: MEASURED BEFORE THE REFERENCE WAS RE-SET)');
		expect(parseLoadProgram(text, machine).tools).toEqual({ '6': -13.5018 });
	});
	it('writes a warning comment right above an included flagged line', () => {
		const text = loadProgram(machine, table, {
			warnings: [{ section: 'work', register: 'G54', reason: 'STALE - included by a lead' }]
		});
		const lines = text.split('\n');
		const at = lines.indexOf('G10 L2 P1 Z1.8251');
		expect(lines[at - 1]).toBe('(WARNING G54 STALE - INCLUDED BY A LEAD)');
		expect(parseLoadProgram(text, machine)).toEqual(table);
	});
});

describe('finding titles', () => {
	it('every kind has a plain title that is not its code', () => {
		for (const k of TITLED_KINDS) {
			expect(FINDING_TITLE[k]).toBeTruthy();
			if (k.includes('-')) expect(FINDING_TITLE[k]).not.toContain(k);
		}
		expect(findingTitle('stale-age')).toBe("Offset older than the shop's limit");
		expect(findingTitle('no-such-kind')).not.toContain('no-such-kind');
	});
});
