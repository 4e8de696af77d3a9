import { z } from 'zod';
import { ROLES } from '$lib/permissions';
import { emailField, newPasswordField } from './auth';
import { idField } from './number';

const roleField = z.enum(ROLES, { message: `Role must be one of: ${ROLES.join(', ')}.` });

export const inviteSchema = z.object({ email: emailField, role: roleField.default('operator') });
export const changeRoleSchema = z.object({
	membershipId: idField('Member', 'Unknown member.'),
	role: roleField
});
export const removeMemberSchema = z.object({
	membershipId: idField('Member', 'Unknown member.')
});
export const invitationIdSchema = z.object({
	invitationId: idField('Invitation', 'Unknown invitation.')
});

/** Accepting an invitation: a name and password only when the e-mail has no account yet. */
export const acceptInvitationSchema = z.object({
	name: z.string().trim().max(120, 'Name too long (120 characters at most).').default(''),
	password: z.union([z.literal(''), newPasswordField]).default('')
});

/** Removing a member must be confirmed (the page names the person first). */
export const confirmRemoveSchema = removeMemberSchema.extend({
	confirm: z.literal('yes', { message: 'Confirm the removal first.' })
});

/** Handing over ownership: to whom, confirmed with the owner's own password. */
export const transferOwnershipSchema = z.object({
	membershipId: idField('Member', 'Choose the member who becomes the owner.'),
	password: z.string().min(1, 'Enter your password to confirm.')
});
