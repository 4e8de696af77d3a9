import { describe, expect, test } from 'vitest';
import { READBACK_FINDING_KINDS, TABLE_FINDING_KINDS } from '$lib/offsets';
import { FINDING_KIND_TITLE } from './fleet';

describe('finding kinds are shown as plain titles', () => {
	test('every kind the shop check stores has a title that is not its code', () => {
		for (const kind of [...TABLE_FINDING_KINDS, ...READBACK_FINDING_KINDS]) {
			expect(FINDING_KIND_TITLE[kind], kind).toBeTruthy();
			expect(FINDING_KIND_TITLE[kind]).not.toBe(kind);
		}
	});
});
