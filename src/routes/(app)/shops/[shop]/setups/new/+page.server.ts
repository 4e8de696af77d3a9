import { fail, redirect } from '@sveltejs/kit';
import { setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { resolvePolicy } from '$lib/offsets';
import { setupFormSchema } from '$lib/schemas/setups';
import { assertCanAddSetup } from '$lib/server/billing/gate';
import { db } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { failWithIssues } from '$lib/server/setups/forms';
import { setupChoices } from '$lib/server/setups/queries';
import { createSetup } from '$lib/server/setups/write';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'setups.write');
	const machines = await withShop(shop, (trx) => setupChoices(trx));
	const wanted = Number(event.url.searchParams.get('machine'));
	const machine = machines.find((m) => m.id === wanted) ?? machines[0];
	const form = await superValidate(
		{
			machineId: machine?.id ?? 0,
			name: '',
			job: '',
			clearanceMargin: machine ? resolvePolicy(undefined, machine.units).clearanceMargin : 0,
			fixtures: [],
			toolIds: [],
			ops: []
		},
		zod4(setupFormSchema),
		{ errors: false, id: 'setup' }
	);
	const gate = await assertCanAddSetup(db(), shop);
	return { form, machines, blocked: gate.ok ? null : gate.message };
};

export const actions: Actions = {
	create: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(setupFormSchema), { id: 'setup' });
		if (!form.valid) return fail(400, { form });
		const gate = await assertCanAddSetup(db(), shop);
		if (!gate.ok) return setError(form, '', gate.message, { status: 403 });
		// createSetup checks every reference before it writes anything.
		const result = await withShop(shop, (trx) => createSetup(trx, form.data, user));
		if (!result.ok) return failWithIssues(form, result.issues);
		redirect(303, `/shops/${shop.slug}/setups/${result.value}`);
	}
};
