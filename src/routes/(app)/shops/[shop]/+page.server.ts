import { fail } from '@sveltejs/kit';
import { can } from '$lib/permissions';
import { requireMember } from '$lib/server/guard';
import { db } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { listMachineSummaries } from '$lib/server/machines/queries';
import { dismissFirstSteps, firstSteps } from '$lib/server/shops/first-steps';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const canAdd = can(role, 'machines.write');
	const [machines, steps] = await Promise.all([
		withShop(shop, (trx) => listMachineSummaries(trx)),
		// The guide is for the people who set the shop up (owner, admin, lead).
		canAdd ? firstSteps(db(), shop) : null
	]);
	const guide =
		steps && !steps.dismissed && steps.steps.some((s) => !s.done)
			? { ...steps, canInvite: can(role, 'members.manage') }
			: null;
	return { machines, canAdd, guide };
};

export const actions: Actions = {
	dismissFirstSteps: async (event) => {
		const { shop } = await requireMember(event, 'machines.write');
		const form = await event.request.formData();
		if (form.get('dismiss') !== 'yes')
			return fail(400, { error: 'Say dismiss=yes to hide the guide.' });
		await dismissFirstSteps(db(), shop.id);
		return { dismissed: true };
	}
};
