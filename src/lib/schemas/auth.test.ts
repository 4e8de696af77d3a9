import { describe, expect, it } from 'vitest';
import { newPasswordField } from './auth';

describe('new passwords', () => {
	it('refuses more than 72 bytes (bcrypt would silently read only the first 72)', () => {
		const ascii73 = 'a1'.repeat(36) + 'b';
		expect(new TextEncoder().encode(ascii73).length).toBe(73);
		const r = newPasswordField.safeParse(ascii73);
		expect(r.success).toBe(false);
		expect(r.error?.issues[0].message).toMatch(/at most 72 bytes/);
		expect(newPasswordField.safeParse('a1'.repeat(36)).success).toBe(true);
	});

	it('counts bytes, not characters: 30 accented letters are 60 bytes, 40 are 80', () => {
		expect(newPasswordField.safeParse('é'.repeat(30) + '1x').success).toBe(true);
		expect(newPasswordField.safeParse('é'.repeat(40) + '1x').success).toBe(false);
	});
});
