/**
 * The audit log in plain words (issue 18): a title per kind of entry, and the details as a short
 * sentence — money with its currency, dates as dates — instead of stored codes. Shared by the
 * audit page and its CSV export; no server imports.
 */
import { formatMoney } from '$lib/billing/plans';
import { isRole, ROLE_LABELS } from '$lib/permissions';
import { formatDay } from '$lib/time';

export const AUDIT_TITLES: Record<string, string> = {
	'shop.created': 'Shop created',
	'member.signed-in': 'Signed in',
	'member.role-changed': 'Role changed',
	'member.removed': 'Member removed',
	'invitation.sent': 'Invitation sent',
	'invitation.revoked': 'Invitation revoked',
	'invitation.accepted': 'Invitation accepted',
	'ownership.transferred': 'Ownership handed over',
	'settings.changed': 'Setting changed',
	'machine.created': 'Machine added',
	'machine.updated': 'Machine edited',
	'machine.photo.set': 'Machine photo changed',
	'machine.convention-converted': 'Offset convention converted',
	'reference.reestablished': 'Reference re-established',
	'reading.recorded': 'Reading recorded',
	'reading.corrected': 'Reading corrected',
	'tool.added': 'Tool added',
	'tool.archived': 'Tool archived',
	'tools.imported': 'Tools imported',
	'fixture.added': 'Fixture added',
	'fixture.archived': 'Fixture archived',
	'setup.create': 'Setup created',
	'setup.update': 'Setup edited',
	'setup.status': 'Setup status changed',
	'setup.photo.add': 'Setup photo added',
	'setup.photo.remove': 'Setup photo removed',
	'program.upload': 'Program uploaded',
	'check.requested': 'Offset check started',
	'finding.acknowledge': 'Finding acknowledged',
	'finding.resolve': 'Finding resolved',
	'check.schedule': 'Nightly check time changed',
	'billing.checkout-started': 'Checkout started',
	'billing.subscribed': 'Subscription started',
	'billing.plan-change-requested': 'Plan change asked for',
	'billing.plan-changed': 'Plan changed',
	'billing.status-changed': 'Subscription status changed',
	'billing.payment-received': 'Payment received',
	'billing.payment-failed': 'Payment failed',
	'billing.cancel-scheduled': 'Subscription set to end',
	'billing.cancel-withdrawn': 'Subscription kept',
	'billing.portal-opened': 'Billing portal opened',
	'shop.export-requested': 'Data export asked for',
	'shop.deletion-requested': 'Shop deletion asked for',
	'shop.restored': 'Shop restored'
};

/** A kind's title; an unknown code becomes words ("tool.re-ground" → "Tool re ground"). */
export function auditTitle(action: string): string {
	const known = AUDIT_TITLES[action];
	if (known) return known;
	const words = action.replace(/[.\-_]+/g, ' ').trim();
	return words.charAt(0).toUpperCase() + words.slice(1);
}

const LABELS: Record<string, string> = {
	from: 'from',
	to: 'to',
	role: 'role',
	name: 'name',
	plan: 'plan',
	machine: 'machine',
	units: 'units',
	zTravel: 'Z travel',
	convention: 'convention',
	note: 'note',
	invoice: 'invoice',
	hour: 'hour',
	timeZone: 'time zone',
	field: 'setting',
	version: 'version',
	registers: 'registers',
	description: 'description',
	h: 'H',
	ends: 'ends'
};

/** Ids and internals that mean nothing to a reader of the log. */
const HIDDEN = new Set([
	'machineId',
	'readingId',
	'offsetVersionId',
	'program',
	'subscription',
	'currency',
	'userId',
	'toUserId'
]);

const show = (v: unknown, key: string): string => {
	if (v === null || v === undefined || v === '') return '—';
	if ((key === 'role' || key === 'from' || key === 'to' || key === 'previousRole') && isRole(v)) {
		return ROLE_LABELS[v];
	}
	if (typeof v === 'object') return JSON.stringify(v);
	return String(v);
};

/** The details of an entry as one plain line. Money amounts are in cents with a currency. */
export function describeAudit(
	action: string,
	detail: Record<string, unknown>,
	timeZone: string
): string {
	const parts: string[] = [];
	const currency = typeof detail.currency === 'string' ? detail.currency : 'usd';
	for (const [key, value] of Object.entries(detail)) {
		if (HIDDEN.has(key)) continue;
		if (key === 'amount' && typeof value === 'number') {
			parts.push(formatMoney(value, currency));
			continue;
		}
		if (key === 'ends' && typeof value === 'string') {
			parts.push(`ends ${formatDay(value, timeZone)}`);
			continue;
		}
		if (key === 'hour' && typeof value === 'number') {
			parts.push(`at ${String(value).padStart(2, '0')}:00`);
			continue;
		}
		parts.push(
			`${LABELS[key] ?? key.replace(/([A-Z])/g, ' $1').toLowerCase()}: ${show(value, key)}`
		);
	}
	if (action === 'member.signed-in' && parts.length === 0) return '';
	return parts.join(' · ');
}
