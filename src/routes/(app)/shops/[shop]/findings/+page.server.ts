import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { can } from '$lib/permissions';
import {
	digestPreferenceSchema,
	findingActionSchema,
	findingFilterSchema
} from '$lib/schemas/fleet';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { DIGEST_ROLES } from '$lib/server/fleet/digest';
import { receivesDigest, setReceivesDigest } from '$lib/server/fleet/digest-preference';
import {
	actOnFinding,
	findingHistory,
	listFindings,
	type FindingAction
} from '$lib/server/fleet/findings';
import { requireMember } from '$lib/server/guard';
import { machineChoices } from '$lib/server/machines/queries';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role, user } = await requireMember(event, 'findings.read');
	const filter = findingFilterSchema.parse(Object.fromEntries(event.url.searchParams));
	const { findings, machines, history } = await withShop(shop, async (trx) => {
		const findings = await listFindings(trx, filter);
		return {
			findings,
			machines: await machineChoices(trx),
			history: await findingHistory(
				trx,
				findings.map((f) => f.id)
			)
		};
	});
	const getsDigest = (DIGEST_ROLES as readonly string[]).includes(role);
	return {
		filter,
		findings,
		history,
		machines,
		canAct: can(role, 'findings.acknowledge'),
		digest: getsDigest ? { receive: await receivesDigest(db(), user.id, shop.id) } : null,
		actionForm: await superValidate(zod4(findingActionSchema), { id: 'finding-action' })
	};
};

async function act(event: RequestEvent, action: FindingAction) {
	const { shop, user } = await requireMember(event, 'findings.acknowledge');
	const form = await superValidate(await event.request.formData(), zod4(findingActionSchema), {
		id: 'finding-action'
	});
	if (!form.valid) return fail(400, { form });
	const r = await withShop(shop, (trx) =>
		actOnFinding(trx, form.data.findingId, action, form.data.comment, user, clientAddress(event))
	);
	if (!r.ok) return setError(form, 'comment', r.message);
	return message(form, action === 'acknowledge' ? 'Acknowledged.' : 'Resolved.');
}

export const actions: Actions = {
	acknowledge: (event) => act(event, 'acknowledge'),
	resolve: (event) => act(event, 'resolve'),
	/** The member's own morning digest: on or off (owners, admins and leads get one). */
	digest: async (event) => {
		const { shop, user } = await requireMember(event, 'findings.acknowledge');
		const data = await event.request.formData();
		const form = await superValidate(data, zod4(digestPreferenceSchema));
		// A missing choice would otherwise default to the first one.
		if (!form.valid || !data.has('receive')) return fail(400, { form });
		await setReceivesDigest(db(), user.id, shop.id, form.data.receive !== 'no');
		return message(
			form,
			form.data.receive === 'no'
				? 'You will no longer get the morning digest for this shop.'
				: 'You will get the morning digest after each nightly check.'
		);
	}
};
