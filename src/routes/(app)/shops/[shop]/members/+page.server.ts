import { fail } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import {
	changeRoleSchema,
	invitationIdSchema,
	inviteSchema,
	confirmRemoveSchema
} from '$lib/schemas/members';
import { roleWithArticle } from '$lib/permissions';
import { clientAddress } from '$lib/server/auth/client-address';
import { db } from '$lib/server/db';
import { requireMember } from '$lib/server/guard';
import {
	invite,
	listPendingInvitations,
	resendInvitation,
	revokeInvitation
} from '$lib/server/members/invitations';
import { changeRole, listMembers, removeMember } from '$lib/server/members/members';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role, user } = await requireMember(event, 'members.manage');
	const [members, invitations, form] = await Promise.all([
		listMembers(db(), shop.id),
		listPendingInvitations(db(), shop.id),
		superValidate(zod4(inviteSchema), { id: 'invite' })
	]);
	return {
		members,
		invitations,
		form,
		myRole: role,
		myUserId: user.id,
		transferredTo: event.url.searchParams.get('transferred')
	};
};

/** Row actions answer with a short result line for the row's form. */
function rowResult(ok: boolean, text: string, status = 400) {
	return ok ? { row: { ok: true, text } } : fail(status, { row: { ok: false, text } });
}

export const actions: Actions = {
	invite: async (event) => {
		const { shop, user, role } = await requireMember(event, 'members.manage');
		const form = await superValidate(await event.request.formData(), zod4(inviteSchema), {
			id: 'invite'
		});
		if (!form.valid) return fail(400, { form });
		if (form.data.role === 'owner' && role !== 'owner') {
			return setError(form, 'role', 'Only an owner can invite another owner.');
		}
		const result = await invite(
			db(),
			shop,
			form.data.email,
			form.data.role,
			user,
			clientAddress(event)
		);
		if (result.alreadyMember)
			return setError(form, 'email', `${form.data.email} is already a member of this shop.`);
		if (!result.mailed)
			return message(
				form,
				`Invitation for ${form.data.email} saved, but the e-mail was not sent: the mail service did not answer. Use Resend in Pending invitations to send it.`,
				{ status: 503 }
			);
		return message(
			form,
			`Invitation sent to ${form.data.email} as ${roleWithArticle(form.data.role)}.`
		);
	},
	changeRole: async (event) => {
		const me = await requireMember(event, 'members.manage');
		const form = await superValidate(await event.request.formData(), zod4(changeRoleSchema));
		if (!form.valid) return rowResult(false, Object.values(form.errors).flat().join(' '));
		const r = await changeRole(
			db(),
			me.shop,
			form.data.membershipId,
			form.data.role,
			{ ...me.user, role: me.role },
			clientAddress(event)
		);
		return r.ok ? rowResult(true, 'Role changed.') : rowResult(false, r.message, 409);
	},
	remove: async (event) => {
		const me = await requireMember(event, 'members.manage');
		// The page asks first, naming the person; a post without the confirmation changes nothing.
		const form = await superValidate(await event.request.formData(), zod4(confirmRemoveSchema));
		if (!form.valid) return rowResult(false, Object.values(form.errors).flat().join(' '));
		const r = await removeMember(
			db(),
			me.shop,
			form.data.membershipId,
			{ ...me.user, role: me.role },
			clientAddress(event)
		);
		return r.ok
			? rowResult(true, `${r.name} was removed and no longer has access to ${me.shop.name}.`)
			: rowResult(false, r.message, 409);
	},
	resend: async (event) => {
		const { shop, user } = await requireMember(event, 'members.manage');
		const form = await superValidate(await event.request.formData(), zod4(invitationIdSchema));
		if (!form.valid) return rowResult(false, 'Unknown invitation.');
		const ok = await resendInvitation(
			db(),
			shop,
			form.data.invitationId,
			user,
			clientAddress(event)
		);
		if (ok === 'not-mailed')
			return rowResult(
				false,
				'The e-mail was not sent: the mail service did not answer. The invitation is kept; try Resend again later.',
				503
			);
		return ok
			? rowResult(true, 'Invitation sent again with a new link.')
			: rowResult(false, 'That invitation is no longer pending.', 404);
	},
	revoke: async (event) => {
		const { shop, user } = await requireMember(event, 'members.manage');
		const form = await superValidate(await event.request.formData(), zod4(invitationIdSchema));
		if (!form.valid) return rowResult(false, 'Unknown invitation.');
		const ok = await revokeInvitation(
			db(),
			shop,
			form.data.invitationId,
			user,
			clientAddress(event)
		);
		return ok
			? rowResult(true, 'Invitation revoked.')
			: rowResult(false, 'That invitation is no longer pending.', 404);
	}
};
