import { fail } from '@sveltejs/kit';
import { message, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { DEFAULT_POLICY, DEFAULT_WEAR_LIMIT } from '$lib/offsets';
import { can } from '$lib/permissions';
import { shopSettingsSchema } from '$lib/schemas/settings';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import { rescheduleShop } from '$lib/server/queues/shop-checks';
import { readSettings, saveSettings } from '$lib/server/shops/settings';
import { timeZones } from '$lib/time';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'settings.write');
	const settings = await readSettings(db(), shop.id);
	return {
		form: await superValidate(settings, zod4(shopSettingsSchema), { errors: false }),
		zones: timeZones(),
		defaults: DEFAULT_POLICY,
		wearDefaults: DEFAULT_WEAR_LIMIT,
		canDelete: can(role, 'shop.delete'),
		canExport: can(role, 'shop.export'),
		canTransfer: can(role, 'ownership.transfer')
	};
};

const LABELS: Record<string, string> = {
	name: 'name',
	timeZone: 'time zone',
	defaultUnits: 'default units',
	checkHour: 'check hour',
	jumpTolerance: 'jump limit',
	toolMaxAgeDays: 'tool length age limit',
	workMaxAgeDays: 'work offset age limit',
	wearLimit: 'wear limit'
};

export const actions: Actions = {
	default: async (event) => {
		const { shop, user } = await requireMember(event, 'settings.write');
		const form = await superValidate(event.request, zod4(shopSettingsSchema));
		if (!form.valid) {
			// A refused form comes back with the text as posted; the hour list matches numbers,
			// so the hour goes back as one (else the list would show no hour and post none).
			const hour = Number(form.data.checkHour);
			if (Number.isInteger(hour)) form.data.checkHour = hour;
			return fail(400, { form });
		}
		const { changed, settings } = await saveSettings(
			db(),
			shop,
			form.data,
			user,
			clientAddress(event)
		);
		if (changed.length === 0) return message(form, 'Nothing changed.');
		let queueNote = '';
		if (changed.includes('checkHour') || changed.includes('timeZone')) {
			const moved = await rescheduleShop({
				id: shop.id,
				checkHour: settings.checkHour,
				timeZone: settings.timeZone
			});
			if (!moved) {
				queueNote =
					' The job queue cannot be reached right now; the worker picks up the new check time when it is back.';
			}
		}
		return message(form, `Saved: ${changed.map((c) => LABELS[c] ?? c).join(', ')}.${queueNote}`);
	}
};
