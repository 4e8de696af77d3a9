import { describe, expect, it } from 'vitest';
import { componentFromParams } from './history';

describe('componentFromParams (the component history page URL)', () => {
	it('reads a work offset X/Y and a tool register, canonical', () => {
		expect(componentFromParams('work', 'g54', 'x')).toEqual({
			kind: 'work',
			register: 'G54',
			component: 'x'
		});
		expect(componentFromParams('work', 'G54.1 P12', 'y')).toMatchObject({ register: 'G54.1 P12' });
		expect(componentFromParams('tool', '03', 'length-wear')).toEqual({
			kind: 'tool',
			register: '3',
			component: 'length-wear'
		});
		expect(componentFromParams('tool', 'H7', 'radius')).toMatchObject({ register: '7' });
	});

	it('refuses what names no component register', () => {
		expect(componentFromParams('work', 'G53', 'x')).toBeNull();
		expect(componentFromParams('work', 'G54', 'radius')).toBeNull();
		expect(componentFromParams('work', 'G54', 'z')).toBeNull();
		expect(componentFromParams('tool', '3', 'x')).toBeNull();
		expect(componentFromParams('tool', '0', 'radius')).toBeNull();
		expect(componentFromParams('tool', '10000', 'radius')).toBeNull();
		expect(componentFromParams('spindle', '3', 'radius')).toBeNull();
	});
});
