import { describe, expect, it } from 'vitest';
import { healthOf } from './board';

const offsets = { registers: 4, staleReference: 0, staleAge: 0 };
const none = { stop: 0, caution: 0, acknowledged: 0, staleFindings: 0, stopAny: 0 };

describe('healthOf (a machine on the fleet board)', () => {
	it('names the Stops by their plain titles after the count', () => {
		expect(
			healthOf(true, offsets, { ...none, stop: 1, stopAny: 2, acknowledged: 1 }, [
				"Wear beyond the shop's limit",
				'Minus sign probably added or dropped'
			])
		).toEqual({
			health: 'stop',
			reason: "2 stop findings: Wear beyond the shop's limit; Minus sign probably added or dropped"
		});
	});

	it('keeps the count alone without titles, and the order of the other states', () => {
		expect(healthOf(true, offsets, { ...none, stop: 1, stopAny: 1 })).toEqual({
			health: 'stop',
			reason: '1 stop finding'
		});
		expect(healthOf(false, offsets, { ...none, stopAny: 1 }, ['x']).health).toBe('unset');
		expect(healthOf(true, { ...offsets, staleAge: 1 }, none)).toEqual({
			health: 'stale',
			reason: '1 offset past the age limit'
		});
		expect(healthOf(true, offsets, { ...none, caution: 2 })).toEqual({
			health: 'caution',
			reason: '2 findings to look at'
		});
		expect(healthOf(true, offsets, none)).toEqual({ health: 'ok', reason: 'Nothing found' });
	});
});
