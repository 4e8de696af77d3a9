import { fail, redirect } from '@sveltejs/kit';
import { message, setError, superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { acceptInvitationSchema } from '$lib/schemas/members';
import { PASSWORD_RULE } from '$lib/schemas/auth';
import { clientAddress } from '$lib/server/auth/client-address';
import { hashPassword } from '$lib/server/auth/password';
import { startSession } from '$lib/server/auth/sign-in';
import { db } from '$lib/server/db';
import { acceptInvitation, lookupInvitation } from '$lib/server/members/invitations';
import type { Actions, PageServerLoad } from './$types';

const PROBLEM = {
	unknown:
		'This invitation link is not valid (it may have been revoked or replaced by a newer one). Ask the person who invited you to send it again.',
	expired: 'This invitation has expired. Ask the person who invited you to send it again.',
	used: 'This invitation has already been accepted. Sign in to reach the shop.'
} as const;

export const load: PageServerLoad = async ({ params, locals }) => {
	const found = await lookupInvitation(db(), params.token);
	const form = await superValidate(zod4(acceptInvitationSchema));
	if (!found.ok)
		return {
			problem: PROBLEM[found.reason],
			invitation: null,
			form,
			signedInAs: locals.user?.email ?? null
		};
	const inv = found.invitation;
	return {
		problem: null,
		invitation: {
			shopName: inv.shopName,
			email: inv.email,
			role: inv.role,
			hasAccount: inv.hasAccount
		},
		signedInAs: locals.user?.email ?? null,
		form
	};
};

export const actions: Actions = {
	default: async (event) => {
		const form = await superValidate(await event.request.formData(), zod4(acceptInvitationSchema));
		if (!form.valid) return fail(400, { form });
		const found = await lookupInvitation(db(), event.params.token);
		if (!found.ok) return message(form, PROBLEM[found.reason], { status: 400 });
		const inv = found.invitation;
		const ip = clientAddress(event);

		if (inv.hasAccount) {
			// An existing account proves itself by being signed in as the invited address.
			const me = event.locals.user;
			if (!me || me.email.toLowerCase() !== inv.email.toLowerCase()) {
				return message(form, `Sign in as ${inv.email} to accept this invitation.`, { status: 403 });
			}
			const r = await acceptInvitation(db(), inv, null, ip);
			if ('error' in r) return message(form, PROBLEM.used, { status: 400 });
			redirect(303, `/shops/${inv.shopSlug}`);
		}

		if (!form.data.name) return setError(form, 'name', 'Enter your name.');
		if (!form.data.password)
			return setError(form, 'password', `Choose a password: ${PASSWORD_RULE}.`);
		const r = await acceptInvitation(
			db(),
			inv,
			{ name: form.data.name, passwordHash: await hashPassword(form.data.password) },
			ip
		);
		if ('error' in r) return message(form, PROBLEM.used, { status: 400 });
		return startSession(event, inv.email, form.data.password, `/shops/${inv.shopSlug}`);
	}
};
