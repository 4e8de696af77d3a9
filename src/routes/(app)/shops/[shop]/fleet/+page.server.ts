import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { can } from '$lib/permissions';
import { checkHourSchema, checkNowSchema } from '$lib/schemas/fleet';
import { audit } from '$lib/server/audit';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { fleetBoard } from '$lib/server/fleet/board';
import { boardAges } from '$lib/server/shops/settings';
import { requireMember } from '$lib/server/guard';
import { ChecksPausedError, enqueueCheckNow, rescheduleShop } from '$lib/server/queues/shop-checks';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'findings.read');
	const board = await withShop(shop, async (trx) =>
		fleetBoard(trx, new Date(), await boardAges(trx, shop.id))
	);
	const { check_hour } = await db()('public.shops').where({ id: shop.id }).first('check_hour');
	return {
		board,
		checkHour: Number(check_hour),
		timeZone: shop.timeZone,
		canAct: can(role, 'findings.acknowledge'),
		hourForm: await superValidate({ hour: Number(check_hour) }, zod4(checkHourSchema), {
			id: 'check-hour'
		})
	};
};

export const actions: Actions = {
	/** "Check now": enqueue a check of the whole shop and hand back the job to follow. */
	checkNow: async (event) => {
		const { shop, user } = await requireMember(event, 'findings.acknowledge');
		const data = await event.request.formData();
		const form = await superValidate(data, zod4(checkNowSchema));
		// superforms fills a missing field with its default: an empty post must not start a check.
		if (!form.valid || !data.has('scope')) return fail(400, { form });
		try {
			const jobId = await enqueueCheckNow(shop.id);
			await withShop(shop, (trx) =>
				audit(trx, {
					actorUserId: user.id,
					actorEmail: user.email,
					action: 'check.requested',
					target: `job:${jobId}`,
					ip: clientAddress(event)
				})
			);
			return { form, jobId };
		} catch (e) {
			if (e instanceof ChecksPausedError) return fail(503, { form, paused: e.message });
			throw e;
		}
	},
	/** The local hour of the nightly check (owner, admin, lead). */
	schedule: async (event) => {
		const { shop, user } = await requireMember(event, 'findings.acknowledge');
		const data = await event.request.formData();
		const form = await superValidate(data, zod4(checkHourSchema), { id: 'check-hour' });
		// A missing hour would otherwise default to 0 (midnight).
		if (!data.get('hour')) return setError(form, 'hour', 'Pick an hour from 00 to 23.');
		if (!form.valid) return fail(400, { form });
		const hour = form.data.hour;
		await db()('public.shops').where({ id: shop.id }).update({ check_hour: hour });
		await withShop(shop, (trx) =>
			audit(trx, {
				actorUserId: user.id,
				actorEmail: user.email,
				action: 'check.schedule',
				target: `shop:${shop.id}`,
				detail: { hour, timeZone: shop.timeZone },
				ip: clientAddress(event)
			})
		);
		const moved = await rescheduleShop({ id: shop.id, checkHour: hour, timeZone: shop.timeZone });
		const at = `${String(hour).padStart(2, '0')}:00`;
		return message(
			form,
			moved
				? `The nightly check now runs at ${at} (${shop.timeZone}).`
				: `Saved ${at}. The job queue cannot be reached right now; the worker picks up the new hour when it is back.`
		);
	}
};
