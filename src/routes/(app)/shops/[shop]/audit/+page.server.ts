import { requireMember } from '$lib/server/guard';
import { auditFilterOptions, readAuditLog } from '$lib/server/members/members';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'audit.read');
	const actor = event.url.searchParams.get('person') ?? '';
	const action = event.url.searchParams.get('kind') ?? '';
	const [entries, options] = await Promise.all([
		readAuditLog(shop, { actor: actor || undefined, action: action || undefined }),
		auditFilterOptions(shop)
	]);
	return { entries, options, filter: { person: actor, kind: action } };
};
