import { createHmac } from 'node:crypto';
import { afterEach, describe, expect, it } from 'vitest';
import { ConfigError, reloadConfig } from '../config';
import { requireShopToken, shopToken } from './shop-token';

const saved = process.env.AUTH_SECRET;
const useSecret = (secret: string | undefined) => {
	if (secret === undefined) delete process.env.AUTH_SECRET;
	else process.env.AUTH_SECRET = secret;
	reloadConfig();
};
afterEach(() => useSecret(saved));

describe('shopToken', () => {
	it('is the HMAC-SHA256 of the labelled schema name under AUTH_SECRET', () => {
		useSecret('unit-secret');
		const expected = createHmac('sha256', 'unit-secret')
			.update('datumkeep shop token v1\0shop_7')
			.digest('hex');
		expect(shopToken('shop_7')).toBe(expected);
		expect(shopToken('shop_7')).toMatch(/^[0-9a-f]{64}$/);
	});

	it('differs between shops and between secrets', () => {
		useSecret('unit-secret');
		const a = shopToken('shop_1');
		expect(shopToken('shop_2')).not.toBe(a);
		useSecret('another-secret');
		expect(shopToken('shop_1')).not.toBe(a);
	});

	it('refuses a name that is not a shop schema', () => {
		useSecret('unit-secret');
		expect(() => shopToken('public')).toThrow(/not a shop schema name/);
	});

	it('without AUTH_SECRET: null, and a ConfigError naming it where a token is required', () => {
		useSecret(undefined);
		expect(shopToken('shop_1')).toBeNull();
		expect(() => requireShopToken('shop_1')).toThrow(ConfigError);
		expect(() => requireShopToken('shop_1')).toThrow(/AUTH_SECRET/);
	});
});
