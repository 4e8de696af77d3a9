import { programComponents } from '$lib/server/components/load-program';
import { fail, redirect } from '@sveltejs/kit';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { can } from '$lib/permissions';
import {
	copySetupSchema,
	EDITABLE_STATES,
	photoCaptionSchema,
	photoIdSchema,
	setupFormSchema,
	setupSignoffSchema,
	setupStatusSchema,
	SETUP_STATE_LABEL
} from '$lib/schemas/setups';
import { assertCanAddSetup } from '$lib/server/billing/gate';
import { db } from '$lib/server/db';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { failWithIssues } from '$lib/server/setups/forms';
import { clientAddress } from '$lib/server/auth/client-address';
import { gateReason } from '$lib/server/offsets/gate';
import { latestSignoff, recordSignoff } from '$lib/server/setups/signoff';
import { setupFromParam, setupLoadProgram } from '$lib/server/setups/load';
import { addSetupPhoto, PHOTO_MAX_BYTES, removeSetupPhoto } from '$lib/server/setups/photos';
import { setupChoices } from '$lib/server/setups/queries';
import { copySetup, setupAsForm } from '$lib/server/setups/copy';
import { changeSetupStatus } from '$lib/server/setups/status';
import { updateSetup } from '$lib/server/setups/write';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		const machines = await setupChoices(trx);
		const current = await setupAsForm(trx, setup.id);
		const form = await superValidate(current!, zod4(setupFormSchema), {
			errors: false,
			id: 'setup'
		});
		const program = setupLoadProgram(setup, undefined, await programComponents(trx, setup.machine));
		const signoff = await latestSignoff(trx, setup.id);
		return {
			signoff,
			canIncludeFlagged: can(role, 'machines.write'),
			setup,
			machines,
			form,
			loadProgram: program.ok
				? {
						ok: true as const,
						withheld: program.withheld.map((r) => ({ label: r.label, reason: gateReason(r) }))
					}
				: { ok: false as const, reasons: program.reasons },
			canWrite: can(role, 'setups.write'),
			editable: EDITABLE_STATES.includes(setup.status),
			photoMaxBytes: PHOTO_MAX_BYTES
		};
	});
};

/** Short result lines for the small forms (state, copy, photos). */
const done = (key: string, text: string) => ({ [key]: { ok: true, text } });
const refused = (key: string, text: string, status = 400) =>
	fail(status, { [key]: { ok: false, text } });

export const actions: Actions = {
	save: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const form = await superValidate(event.request, zod4(setupFormSchema), { id: 'setup' });
		if (!form.valid) return fail(400, { form });
		const result = await withShop(shop, async (trx) => {
			const setup = await setupFromParam(trx, event.params.setup);
			return updateSetup(trx, setup.id, form.data, user);
		});
		if (!result.ok) return failWithIssues(form, result.issues);
		return { form };
	},

	status: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const parsed = setupStatusSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return refused('status', parsed.error.issues[0].message);
		const result = await withShop(shop, async (trx) => {
			const setup = await setupFromParam(trx, event.params.setup);
			return changeSetupStatus(trx, setup.id, parsed.data.to, user, parsed.data.note);
		});
		if (!result.ok) return refused('status', result.issues[0].message, 409);
		return done('status', `Now ${SETUP_STATE_LABEL[result.value].toLowerCase()}.`);
	},

	signoff: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const parsed = setupSignoffSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success)
			return refused('signoff', parsed.error.issues.map((i) => i.message).join(' '));
		await withShop(shop, async (trx) => {
			const setup = await setupFromParam(trx, event.params.setup);
			await recordSignoff(trx, setup.id, parsed.data, user, clientAddress(event));
		});
		return done('signoff', 'Sign-off recorded: the setup can now be marked proven.');
	},

	copy: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const parsed = copySetupSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return refused('copy', parsed.error.issues[0].message);
		const gate = await assertCanAddSetup(db(), shop);
		if (!gate.ok) return refused('copy', gate.message, 403);
		const result = await withShop(shop, async (trx) => {
			const setup = await setupFromParam(trx, event.params.setup);
			return copySetup(trx, setup.id, parsed.data.name, user);
		});
		if (!result.ok) return refused('copy', result.issues.map((i) => i.message).join(' '));
		redirect(303, `/shops/${shop.slug}/setups/${result.value.id}?copied=1`);
	},

	uploadPhoto: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const data = await event.request.formData();
		const caption = photoCaptionSchema.safeParse({ caption: data.get('caption') ?? '' });
		if (!caption.success) return refused('photo', caption.error.issues[0].message);
		const result = await withShop(shop, async (trx) => {
			const setup = await setupFromParam(trx, event.params.setup);
			return addSetupPhoto(
				trx,
				shop.schemaName,
				setup.id,
				data.get('photo'),
				caption.data.caption,
				user
			);
		});
		if (!result.ok) return refused('photo', result.message);
		return done('photo', 'Photo added.');
	},

	removePhoto: async (event) => {
		const { shop, user } = await requireMember(event, 'setups.write');
		const parsed = photoIdSchema.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return refused('photo', parsed.error.issues[0].message);
		const removed = await withShop(shop, async (trx) => {
			const setup = await setupFromParam(trx, event.params.setup);
			return removeSetupPhoto(trx, setup.id, parsed.data.photoId, user);
		});
		if (!removed) return refused('photo', 'That photo is not part of this setup.', 404);
		return done('photo', 'Photo removed.');
	}
};
