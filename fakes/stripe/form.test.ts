import { describe, expect, it } from 'vitest';
import { parseForm } from './form';

describe('parseForm (Stripe bracket notation)', () => {
	it('nests objects and turns indexed keys into arrays', () => {
		const parsed = parseForm(
			'mode=subscription&line_items[0][price]=price_a&line_items[0][quantity]=2&line_items[1][price]=price_b' +
				'&metadata[shop]=fernhill&subscription_data[trial_period_days]=14&expand[0]=customer&expand[1]=subscription'
		);
		expect(parsed).toEqual({
			mode: 'subscription',
			line_items: [{ price: 'price_a', quantity: '2' }, { price: 'price_b' }],
			metadata: { shop: 'fernhill' },
			subscription_data: { trial_period_days: '14' },
			expand: ['customer', 'subscription']
		});
	});

	it('appends for empty brackets, keeps sparse indices as an object, and ignores prototype keys', () => {
		const parsed = parseForm('expand[]=a&expand[]=b&odd[1]=x&__proto__[polluted]=1&metadata[key]=');
		expect(parsed.expand).toEqual(['a', 'b']);
		expect(parsed.odd).toEqual({ 1: 'x' });
		expect(parsed.metadata).toEqual({ key: '' });
		expect(({} as Record<string, unknown>).polluted).toBeUndefined();
	});
});
