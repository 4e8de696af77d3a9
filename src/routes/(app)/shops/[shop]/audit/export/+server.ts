import { stringify } from 'csv-stringify/sync';
import { auditTitle, describeAudit } from '$lib/audit-words';
import { requireMember } from '$lib/server/guard';
import { readAuditLog } from '$lib/server/members/members';
import { formatWhen } from '$lib/time';
import type { RequestHandler } from './$types';

/** The audit log (with the page's filters) as CSV: plain words plus the stored codes. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'audit.read');
	const actor = event.url.searchParams.get('person') || undefined;
	const action = event.url.searchParams.get('kind') || undefined;
	const entries = await readAuditLog(shop, { actor, action, limit: 100_000 });
	const csv = stringify(
		entries.map((e) => ({
			at_utc: e.at,
			[`at_${shop.timeZone}`]: formatWhen(e.at, shop.timeZone),
			person: e.actorEmail,
			what: auditTitle(e.action),
			subject: e.target,
			details: describeAudit(e.action, e.detail, shop.timeZone),
			kind: e.action,
			detail_json: JSON.stringify(e.detail),
			ip: e.ip
		})),
		{
			header: true,
			columns: [
				'at_utc',
				`at_${shop.timeZone}`,
				'person',
				'what',
				'subject',
				'details',
				'kind',
				'detail_json',
				'ip'
			]
		}
	);
	return new Response(csv, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${shop.slug}-audit-log.csv"`
		}
	});
};
