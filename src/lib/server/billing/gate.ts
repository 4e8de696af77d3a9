/**
 * Billing gates (issue 8). Machine and setup creation call these on the server before they
 * write; the UI may also hide buttons, but these are what enforce the plan. Nothing here ever
 * hides or deletes data: a read-only shop keeps every machine, offset and reading readable, and
 * operators can always read offsets.
 *
 * Rules:
 * - trial: full use until `trial_ends_at` (14 days after sign-up), up to TRIAL_MACHINE_LIMIT
 *   machines; after it ends without a plan, read-only for new machines and setups.
 * - active: full use up to the plan's machine limit.
 * - past due: full use for PAST_DUE_GRACE_DAYS (7) after the first failed payment
 *   ('past-due-grace', with a banner); after that read-only for new machines and setups.
 * - cancelled: read-only for new machines and setups.
 */
import type { Knex } from 'knex';
import { PAST_DUE_GRACE_DAYS, PLANS, TRIAL_DAYS, limitLabel } from '$lib/billing/plans';
import { db } from '../db';
import { withShop, type ShopRef } from '../db/tenant';
import { allowanceName, getShopBilling, machineLimit, type ShopBilling } from './state';

export type WriteState = 'ok' | 'past-due-grace' | 'read-only';
export type GateResult = { ok: true } | { ok: false; message: string };

const DAY_MS = 86_400_000;
const day = (d: Date) => d.toISOString().slice(0, 10);

/** When a past-due shop's grace period ends. */
export function graceEndsAt(b: ShopBilling): Date | null {
	return b.pastDueSince ? new Date(b.pastDueSince.getTime() + PAST_DUE_GRACE_DAYS * DAY_MS) : null;
}

/** Whether the shop may add machines and setups now. */
export function shopWriteState(b: ShopBilling, now: Date = new Date()): WriteState {
	switch (b.status) {
		case 'active':
			return 'ok';
		case 'trialing':
			return now < b.trialEndsAt ? 'ok' : 'read-only';
		case 'past_due': {
			const ends = graceEndsAt(b);
			return ends && now < ends ? 'past-due-grace' : 'read-only';
		}
		case 'canceled':
			return 'read-only';
	}
}

/** Why a read-only shop cannot add things, and how to get out of it. */
export function readOnlyMessage(b: ShopBilling, what: string): string {
	const fix = 'An owner or admin can put this right on the Billing page.';
	const kept = 'Nothing is lost: every machine, offset and reading stays readable.';
	if (b.status === 'canceled') {
		return `This shop's subscription is cancelled, so ${what} cannot be added. ${kept} ${fix}`;
	}
	if (b.status === 'past_due') {
		return `Payment for this shop has been overdue since ${day(b.pastDueSince ?? new Date())}, more than the ${PAST_DUE_GRACE_DAYS}-day grace period, so ${what} cannot be added until it is paid. ${kept} ${fix}`;
	}
	return `The ${TRIAL_DAYS}-day trial ended on ${day(b.trialEndsAt)}, so ${what} cannot be added until a plan is chosen. ${kept} ${fix}`;
}

/** Active (not archived) machines of the shop. */
export async function countActiveMachines(
	shop: ShopRef,
	conn: Knex | Knex.Transaction = db()
): Promise<number> {
	return withShop(
		shop,
		async (trx) => {
			const [{ n }] = await trx('machines').whereNull('archived_at').count({ n: '*' });
			return Number(n);
		},
		conn as Knex
	);
}

function limitMessage(b: ShopBilling, limit: number, count: number): string {
	const larger = PLANS.filter((p) => p.machineLimit === null || p.machineLimit > limit)
		.map((p) => `${p.name}: ${limitLabel(p.machineLimit)}`)
		.join('; ');
	return `The ${allowanceName(b)} allows ${limitLabel(limit)} and this shop already has ${count} active. To add another, an owner or admin can choose a larger plan on the Billing page (${larger}), or archive a machine that is no longer in use.`;
}

/**
 * May the shop add one more machine? Call it on the server right before inserting, ideally with
 * the transaction that inserts (the shop's billing row is then locked, so two additions at once
 * cannot both pass the limit).
 */
export async function assertCanAddMachine(
	conn: Knex | Knex.Transaction,
	shop: ShopRef,
	now: Date = new Date()
): Promise<GateResult> {
	const b = await getShopBilling(conn, shop.id, conn.isTransaction === true);
	if (shopWriteState(b, now) === 'read-only') {
		return { ok: false, message: readOnlyMessage(b, 'new machines') };
	}
	const limit = machineLimit(b);
	if (limit === null) return { ok: true };
	const count = await countActiveMachines(shop, conn);
	if (count >= limit) return { ok: false, message: limitMessage(b, limit, count) };
	return { ok: true };
}

/** May the shop add a setup? Refused only when the shop is read-only (no count limit). */
export async function assertCanAddSetup(
	conn: Knex | Knex.Transaction,
	shop: ShopRef,
	now: Date = new Date()
): Promise<GateResult> {
	const b = await getShopBilling(conn, shop.id);
	if (shopWriteState(b, now) === 'read-only') {
		return { ok: false, message: readOnlyMessage(b, 'new setups') };
	}
	return { ok: true };
}
