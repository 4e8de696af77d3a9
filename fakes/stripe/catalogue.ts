/**
 * The catalogue the fake serves when none is given: Datumkeep's three plans, limited by machine
 * count (issue 8). The app reads the limit from `metadata.machine_limit` ('unlimited' for none).
 * Tests and `FAKE_STRIPE_PRICES` can replace it.
 */
import type { CataloguePrice } from './types';

/** Default plans: Bench (2 machines), Shop (10), Floor (no limit), billed monthly in USD. */
export const DEFAULT_PRICES: CataloguePrice[] = [
	{
		id: 'price_bench_monthly',
		productName: 'Bench',
		unit_amount: 4900,
		currency: 'usd',
		interval: 'month',
		lookup_key: 'bench_monthly',
		metadata: { plan: 'bench', machine_limit: '2' }
	},
	{
		id: 'price_shop_monthly',
		productName: 'Shop',
		unit_amount: 14900,
		currency: 'usd',
		interval: 'month',
		lookup_key: 'shop_monthly',
		metadata: { plan: 'shop', machine_limit: '10' }
	},
	{
		id: 'price_floor_monthly',
		productName: 'Floor',
		unit_amount: 34900,
		currency: 'usd',
		interval: 'month',
		lookup_key: 'floor_monthly',
		metadata: { plan: 'floor', machine_limit: 'unlimited' }
	}
];
