import { json } from '@sveltejs/kit';
import { SETUP_STATES, type SetupState } from '$lib/schemas/setups';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { listSetups } from '$lib/server/setups/queries';
import type { RequestHandler } from './$types';
import { numberTextMessage, readNumberText } from '$lib/offsets/number-text';

/** The shop's setups, newest first; `?machine=<id>` and `?state=<state>` narrow the list. */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const machineParam = event.url.searchParams.get('machine');
	// Query numbers go through the same strict reader as forms ("1abc" is not machine 1).
	const read = machineParam === null ? null : readNumberText(machineParam, { whole: true });
	if (read && !read.ok)
		return json(
			{ message: numberTextMessage('machine', machineParam, read.reason, { whole: true }) },
			{ status: 400 }
		);
	const machine = read?.ok ? read.value : 0;
	const state = event.url.searchParams.get('state');
	if (state && !(SETUP_STATES as readonly string[]).includes(state)) {
		return json(
			{ message: `state must be one of: ${SETUP_STATES.join(', ')} (got "${state}").` },
			{ status: 400 }
		);
	}
	const setups = await withShop(shop, (trx) =>
		listSetups(trx, {
			machineId: Number.isSafeInteger(machine) && machine > 0 ? machine : null,
			status: (state as SetupState | null) ?? null
		})
	);
	return json({ setups });
};
