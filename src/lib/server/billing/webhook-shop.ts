import type { Knex } from 'knex';
import { idOf, obj, str, type Obj } from './webhook-object';

/**
 * Which shop an event is about. The stored Stripe ids decide: a customer or subscription we
 * already know belongs to exactly one shop, whatever the event's metadata says. Metadata
 * (`client_reference_id` / `shop_id`, set by our own checkout) is used only to attach a first
 * checkout to a shop with no Stripe customer yet, and never against a stored id. Any
 * disagreement is refused: a signed event for one shop's customer cannot change another shop.
 */
export async function resolveShop(
	trx: Knex.Transaction,
	type: string,
	o: Obj
): Promise<{ shopId: number } | { refused: string } | null> {
	let metaShop: string | undefined;
	let subscriptionId: string | undefined;
	if (type === 'checkout.session.completed') {
		metaShop = str(o, 'client_reference_id') ?? str(obj(o, 'metadata'), 'shop_id');
		subscriptionId = idOf(o, 'subscription');
	} else if (type.startsWith('customer.subscription.')) {
		metaShop = str(obj(o, 'metadata'), 'shop_id');
		subscriptionId = str(o, 'id');
	} else {
		const details = obj(obj(o, 'parent'), 'subscription_details');
		metaShop = str(obj(details, 'metadata'), 'shop_id');
		subscriptionId = idOf(details, 'subscription') ?? idOf(o, 'subscription');
	}
	const customerId = idOf(o, 'customer');
	const idOfRow = async (where: Record<string, unknown>) => {
		const row = await trx('public.shops').where(where).first('id');
		return row ? Number(row.id) : null;
	};
	const byCustomer = customerId ? await idOfRow({ stripe_customer_id: customerId }) : null;
	const bySubscription = subscriptionId
		? await idOfRow({ stripe_subscription_id: subscriptionId })
		: null;
	const meta = metaShop && /^[1-9][0-9]{0,15}$/.test(metaShop) ? Number(metaShop) : null;
	if (byCustomer !== null && bySubscription !== null && byCustomer !== bySubscription)
		return {
			refused: `customer ${customerId} belongs to shop ${byCustomer} but subscription ${subscriptionId} to shop ${bySubscription}`
		};
	const stored = byCustomer ?? bySubscription;
	if (stored !== null) {
		if (meta !== null && meta !== stored)
			return {
				refused: `metadata names shop ${meta} but the Stripe ids belong to shop ${stored}`
			};
		return { shopId: stored };
	}
	if (meta === null) return null;
	// A first checkout: the named shop must not already have another Stripe customer.
	const shop = await trx('public.shops').where({ id: meta }).first('id', 'stripe_customer_id');
	if (!shop) return null;
	if (shop.stripe_customer_id && shop.stripe_customer_id !== customerId)
		return {
			refused: `shop ${meta} already has Stripe customer ${shop.stripe_customer_id}, not ${customerId ?? 'none'}`
		};
	return { shopId: meta };
}
