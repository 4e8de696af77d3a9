/**
 * Deleting a shop, in two steps:
 *
 * 1. The owner asks, typing the shop's address to confirm. A running subscription is cancelled
 *    at Stripe first (if that fails, nothing changes). The shop becomes read-only for everyone
 *    and the owner may restore it until `purge_after` (DELETION_GRACE_DAYS, or
 *    SHOP_DELETION_GRACE_SECONDS where tests need it short).
 * 2. After the grace period the `shop-lifecycle` worker drops the shop's schema and its uploads
 *    folder, removes the memberships and invitations, and sets `purged_at`. The shop row stays
 *    (name, slug, dates) as the subject of the public lifecycle log, which records each step:
 *    the shop's own audit log goes with its schema.
 *
 * The drop runs only in the worker, never in a web request, so it can run under a database
 * role that owns the schemas while the web app's role cannot drop them.
 */
import { rm } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import type { Knex } from 'knex';
import { audit } from '../audit';
import { getShopBilling } from '../billing/state';
import { stripe } from '../billing/stripe';
import { config } from '../config';
import { assertShopSchema } from '../db/schema-name';
import { requireShopToken } from '../db/shop-token';
import { enterShop } from '../db/roles';
import type { ShopRef } from '../db/tenant';
import { renderEmail } from '../email/layout';
import { sendEmail } from '../email/send';
import { logLifecycle } from './lifecycle';
import { enqueueLifecycle } from '../queues/shop-lifecycle';

export const DELETION_GRACE_DAYS = 14;

/** The grace period in ms: 14 days, unless SHOP_DELETION_GRACE_SECONDS says otherwise (tests). */
export function deletionGraceMs(): number {
	const s = config.shopDeletionGraceSeconds;
	if (s !== undefined) return s * 1000;
	return DELETION_GRACE_DAYS * 86_400_000;
}

export interface DeletionState {
	requestedAt: string;
	purgeAfter: string;
}

export async function deletionState(
	knex: Knex | Knex.Transaction,
	shopId: number
): Promise<DeletionState | null> {
	const row = await knex('public.shops')
		.where({ id: shopId })
		.first('deletion_requested_at', 'purge_after');
	return row?.deletion_requested_at
		? {
				requestedAt: new Date(row.deletion_requested_at).toISOString(),
				purgeAfter: new Date(row.purge_after).toISOString()
			}
		: null;
}

type Shop = ShopRef & { slug: string; name: string };
type Person = { id: number; email: string; name: string };

export type DeletionResult = { ok: true; purgeAfter: Date } | { ok: false; message: string };

/** Step 1: cancel billing, mark the shop, log, e-mail the owner, queue the drop. */
export async function requestDeletion(
	knex: Knex,
	shop: Shop,
	by: Person,
	ip = ''
): Promise<DeletionResult> {
	const current = await deletionState(knex, shop.id);
	if (current) {
		return { ok: false, message: 'This shop is already set to be deleted.' };
	}
	const billing = await getShopBilling(knex, shop.id);
	let cancelled: string | null = null;
	if (billing.stripeSubscriptionId && billing.status !== 'canceled') {
		try {
			await stripe().subscriptions.cancel(billing.stripeSubscriptionId);
			cancelled = billing.stripeSubscriptionId;
		} catch (e) {
			console.error(`shop ${shop.id} deletion: cancelling the subscription failed`, e);
			return {
				ok: false,
				message:
					'The subscription could not be cancelled at the payment provider just now, so the shop was not deleted. Try again in a few minutes.'
			};
		}
	}
	const purgeAfter = new Date(Date.now() + deletionGraceMs());
	await knex.transaction(async (trx) => {
		await trx('public.shops').where({ id: shop.id }).update({
			deletion_requested_at: trx.fn.now(),
			deletion_requested_by: by.id,
			purge_after: purgeAfter
		});
		await logLifecycle(trx, {
			shopId: shop.id,
			shopSlug: shop.slug,
			action: 'shop.deletion-requested',
			actorUserId: by.id,
			actorEmail: by.email,
			detail: { purgeAfter: purgeAfter.toISOString(), subscriptionCancelled: cancelled !== null }
		});
		await enterShop(trx, shop.schemaName);
		await audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'shop.deletion-requested',
			detail: { purgeAfter: purgeAfter.toISOString() },
			ip
		});
	});
	await enqueueLifecycle({ kind: 'purge', shopId: shop.id }, purgeAfter.getTime() - Date.now());
	const mail = renderEmail({
		subject: `${shop.name} will be deleted on ${purgeAfter.toISOString().slice(0, 10)} — Datumkeep`,
		paragraphs: [
			`Hello ${by.name},`,
			`You asked to delete ${shop.name}. ${cancelled ? 'Its subscription has been cancelled; nothing more will be charged. ' : ''}Until ${purgeAfter.toISOString().slice(0, 16).replace('T', ' ')} UTC the shop is read-only and you can restore it from its Settings page.`,
			'After that every machine, offset, reading, setup, program and photo of the shop is erased for good. Export the data first if you want to keep it.'
		],
		action: { label: 'Open the shop', url: `${config.origin}/shops/${shop.slug}/settings/delete` }
	});
	await sendEmail(knex, {
		to: by.email,
		...mail,
		kind: 'shop.deletion-requested',
		shopId: shop.id,
		dedupeKey: `deletion:${shop.id}:${purgeAfter.getTime()}`
	});
	return { ok: true, purgeAfter };
}

/** Takes back a deletion during the grace period. The subscription stays cancelled. */
export async function restoreShop(
	knex: Knex,
	shop: Shop,
	by: Person,
	ip = ''
): Promise<{ ok: true } | { ok: false; message: string }> {
	return knex.transaction(async (trx) => {
		const row = await trx('public.shops')
			.where({ id: shop.id })
			.forUpdate()
			.first('deletion_requested_at', 'purged_at');
		if (!row?.deletion_requested_at)
			return { ok: false, message: 'This shop is not set to be deleted.' };
		if (row.purged_at) return { ok: false, message: 'This shop has already been deleted.' };
		await trx('public.shops')
			.where({ id: shop.id })
			.update({ deletion_requested_at: null, deletion_requested_by: null, purge_after: null });
		await logLifecycle(trx, {
			shopId: shop.id,
			shopSlug: shop.slug,
			action: 'shop.restored',
			actorUserId: by.id,
			actorEmail: by.email
		});
		await enterShop(trx, shop.schemaName);
		await audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'shop.restored',
			ip
		});
		return { ok: true as const };
	});
}

/**
 * Step 2 (the worker): drops the schema and uploads of a shop whose grace period is over.
 * Idempotent and safe to call early or twice: it does nothing unless the shop is due.
 */
export async function purgeShop(
	knex: Knex,
	shopId: number,
	now: Date = new Date()
): Promise<'purged' | 'not-due'> {
	const done = await knex.transaction(async (trx) => {
		const shop = await trx('public.shops')
			.where({ id: shopId })
			.forUpdate()
			.first(
				'id',
				'slug',
				'name',
				'schema_name',
				'purge_after',
				'purged_at',
				'deletion_requested_by'
			);
		if (!shop || shop.purged_at || !shop.purge_after || new Date(shop.purge_after) > now) {
			return null;
		}
		assertShopSchema(shop.schema_name);
		const members = await trx('public.memberships as m')
			.join('public.users as u', 'u.id', 'm.user_id')
			.where('m.shop_id', shopId)
			.select('u.id', 'u.email', 'u.name', 'm.role');
		// The schema belongs to the owner role: a definer function drops it, only for a shop due
		// and only with the shop's token (which SQL injected as the app role cannot make).
		await trx.raw('select public.dk_drop_shop_schema(?, ?)', [
			shop.schema_name,
			requireShopToken(shop.schema_name)
		]);
		await trx('public.memberships').where({ shop_id: shopId }).del();
		await trx('public.invitations').where({ shop_id: shopId }).del();
		// No schema name: the shop is gone for every part that lists shops (e.g. nightly checks).
		await trx('public.shops')
			.where({ id: shopId })
			.update({ purged_at: trx.fn.now(), schema_name: null });
		await logLifecycle(trx, {
			shopId,
			shopSlug: shop.slug,
			action: 'shop.purged',
			detail: {
				schema: shop.schema_name,
				memberUserIds: members.map((m) => Number(m.id))
			}
		});
		return { shop, owners: members.filter((m) => m.role === 'owner') };
	});
	if (!done) return 'not-due';
	// The files go after the commit: a failed drop leaves them, a failed delete here is retried.
	await rm(join(resolve(config.uploadsDir), done.shop.schema_name), {
		recursive: true,
		force: true
	});
	for (const owner of done.owners) {
		const mail = renderEmail({
			subject: `${done.shop.name} has been deleted — Datumkeep`,
			paragraphs: [
				`Hello ${owner.name},`,
				`As asked, ${done.shop.name} and all of its data (machines, offsets, readings, setups, programs, photos and its audit log) have now been erased from Datumkeep.`,
				'Your own account stays, with any other shops you belong to.'
			]
		});
		await sendEmail(knex, {
			to: owner.email,
			...mail,
			kind: 'shop.purged',
			shopId,
			dedupeKey: `purged:${shopId}:${String(owner.email).toLowerCase()}`
		});
	}
	return 'purged';
}

/** Shops whose grace period is over and which are not yet dropped (the worker's sweep). */
export async function shopsDueForPurge(knex: Knex, now = new Date()): Promise<number[]> {
	return (
		await knex('public.shops')
			.whereNotNull('purge_after')
			.whereNull('purged_at')
			.where('purge_after', '<=', now)
			.pluck('id')
	).map(Number);
}
