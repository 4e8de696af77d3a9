import { fail } from '@sveltejs/kit';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import { EXPORT_LINK_DAYS, listExports, requestExport } from '$lib/server/shops/export';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'shop.export');
	return { exports: await listExports(db(), shop.id), linkDays: EXPORT_LINK_DAYS };
};

export const actions: Actions = {
	default: async (event) => {
		const { shop, user } = await requireMember(event, 'shop.export');
		const data = await event.request.formData();
		if (data.get('scope') !== 'everything') {
			return fail(400, { error: 'Say what to export (scope=everything).' });
		}
		const running = (await listExports(db(), shop.id)).some(
			(e) => e.status === 'queued' || e.status === 'running'
		);
		if (running) return fail(409, { error: 'An export is already being built; wait for it.' });
		const { queued } = await requestExport(db(), shop, user, clientAddress(event));
		return {
			started: true,
			note: queued
				? null
				: 'The job queue cannot be reached right now; the export starts as soon as it is back.'
		};
	}
};
