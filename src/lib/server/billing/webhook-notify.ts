import type { Knex } from 'knex';
import type Stripe from 'stripe';
import { PAST_DUE_GRACE_DAYS } from '$lib/billing/plans';
import { config } from '../config';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { isObj, num, str } from './webhook-object';

/** E-mails the shop's owners and admins that a payment failed (once per event and person). */
export async function notifyPaymentFailed(
	knex: Knex,
	shopId: number,
	event: Pick<Stripe.Event, 'id'> & { data: { object: unknown } }
): Promise<void> {
	const shop = await knex('public.shops').where({ id: shopId }).first('name', 'slug');
	const people: { email: string; name: string }[] = await knex('public.memberships as m')
		.join('public.users as u', 'u.id', 'm.user_id')
		.where('m.shop_id', shopId)
		.whereIn('m.role', ['owner', 'admin'])
		.select('u.email', 'u.name');
	const o = isObj(event.data.object) ? event.data.object : {};
	const amount = num(o, 'amount_due');
	const currency = str(o, 'currency') ?? 'usd';
	const money =
		amount === undefined
			? 'the latest invoice'
			: new Intl.NumberFormat('en-US', { style: 'currency', currency }).format(amount / 100);
	const url = `${config.origin}/shops/${shop.slug}/billing`;
	for (const person of people) {
		const mail = renderEmail({
			subject: `Payment failed for ${shop.name} — Datumkeep`,
			paragraphs: [
				`Hello ${person.name},`,
				`The payment of ${money} for ${shop.name}'s Datumkeep subscription did not go through.`,
				`Everything keeps working for ${PAST_DUE_GRACE_DAYS} days. After that, new machines and setups are paused until the payment is made; no data is ever lost and offsets stay readable.`,
				'Update the payment card on the Billing page to settle it.'
			],
			action: { label: 'Open Billing', url }
		});
		await sendEmail(knex, {
			to: person.email,
			...mail,
			kind: 'billing.payment-failed',
			shopId,
			dedupeKey: `billing:payment-failed:${event.id}:${person.email.toLowerCase()}`
		});
	}
}
