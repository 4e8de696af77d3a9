import { requireMember } from '$lib/server/guard';
import { readAuditLog } from '$lib/server/members/members';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'audit.read');
	return { entries: await readAuditLog(shop) };
};
