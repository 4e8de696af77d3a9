import { describe, expect, test } from 'vitest';
import { machineFormSchema } from './machine';

const base = {
	name: 'Mill 5',
	units: 'inch',
	zTravel: 20,
	resolution: 0.0001,
	convention: 'reference-touch',
	notes: ''
};

describe('machine form: extended work offsets (issue 16)', () => {
	test('a G10 L10 machine may have up to 48, addressed either way; the default is none', () => {
		const r = machineFormSchema.parse({ ...base, controlStyle: 'iso' });
		expect(r).toMatchObject({ extendedWorkOffsets: 0, extendedAddress: 'G54.1 P' });
		expect(
			machineFormSchema.parse({
				...base,
				controlStyle: 'iso',
				extendedWorkOffsets: '48',
				extendedAddress: 'G54 P'
			})
		).toMatchObject({ extendedWorkOffsets: 48, extendedAddress: 'G54 P' });
		const over = machineFormSchema.safeParse({
			...base,
			controlStyle: 'iso',
			extendedWorkOffsets: 49
		});
		expect(over.success).toBe(false);
		expect(over.error?.issues[0].message).toMatch(/up to 48/);
	});

	test('the tool-table form (G10 L1) has none in load programs, and says why', () => {
		// NISTIR 6556 §3.5.5: G10 L2 P7–P9 are G59.1–G59.3, and there is no G54.1 P form
		const r = machineFormSchema.safeParse({
			...base,
			controlStyle: 'rs274ngc',
			extendedWorkOffsets: 6
		});
		expect(r.success).toBe(false);
		expect(r.error?.issues[0]).toMatchObject({ path: ['extendedWorkOffsets'] });
		expect(r.error?.issues[0].message).toMatch(/G59\.1–G59\.3/);
	});
});
