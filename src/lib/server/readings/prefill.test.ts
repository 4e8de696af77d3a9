import { describe, expect, it } from 'vitest';
import { prefillReading } from './prefill';

describe('prefillReading', () => {
	it("takes the operator's inputs from the queue's link", () => {
		const url = new URL(
			'http://x/r?machineZ=-14.7504&touchedThrough=gauge+block&blockHeight=1.0000&reason=new+insert&withToolId=3&fixtureChanged=1'
		);
		expect(prefillReading(url)).toEqual({
			machineZ: '-14.7504',
			touchedThrough: 'gauge block',
			blockHeight: '1.0000',
			reason: 'new insert',
			withToolId: '3',
			fixtureChanged: true
		});
	});
	it('leaves out what is malformed', () => {
		const url = new URL(
			`http://x/r?touchedThrough=magic&withToolId=abc&machineZ=${'9'.repeat(41)}`
		);
		expect(prefillReading(url)).toEqual({});
	});
});
