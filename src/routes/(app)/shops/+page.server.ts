import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';

/** With one shop, go straight to it; otherwise list them. */
export const load: PageServerLoad = async ({ parent }) => {
	const { shops } = await parent();
	if (shops.length === 1) redirect(303, `/shops/${shops[0].slug}`);
	return {};
};
