import { z } from 'zod';

/** Shared by the forms and the API: what a valid e-mail, password and shop address look like. */
export const PASSWORD_RULE = 'at least 10 characters, with at least one letter and one digit';

export const emailField = z
	.string()
	.trim()
	.min(1, 'Enter an e-mail address.')
	.max(254, 'That e-mail address is too long (254 characters at most).')
	.email('That is not an e-mail address (expected something like name@example.com).');

export const newPasswordField = z
	.string()
	.min(10, `Password too short: use ${PASSWORD_RULE}.`)
	.max(200, 'Password too long: 200 characters at most.')
	.regex(/[A-Za-z]/, `Password needs a letter: use ${PASSWORD_RULE}.`)
	.regex(/[0-9]/, `Password needs a digit: use ${PASSWORD_RULE}.`)
	// bcrypt reads only the first 72 bytes: a longer password would be cut silently, so that
	// anything sharing its first 72 bytes would also sign in.
	.refine(
		(p) => new TextEncoder().encode(p).length <= 72,
		'Password too long: at most 72 bytes (72 plain letters or digits; accented letters and symbols take 2–4 bytes each).'
	);

export const SLUG_RULE =
	'2–48 lowercase letters, digits or hyphens, starting and ending with a letter or digit';
export const slugField = z
	.string()
	.trim()
	.regex(/^[a-z0-9]([a-z0-9-]{0,46}[a-z0-9])$/, `The web address must be ${SLUG_RULE}.`);

export const signInSchema = z.object({
	email: emailField,
	password: z.string().min(1, 'Enter your password.'),
	next: z.string().default('')
});

export const signUpSchema = z.object({
	name: z
		.string()
		.trim()
		.min(1, 'Enter your name.')
		.max(120, 'Name too long (120 characters at most).'),
	email: emailField,
	password: newPasswordField,
	shopName: z
		.string()
		.trim()
		.min(2, 'Enter the shop name (2 characters at least).')
		.max(120, 'Shop name too long (120 characters at most).'),
	shopSlug: z.union([z.literal(''), slugField]).default('')
});

export const resetRequestSchema = z.object({ email: emailField });
export const resetPasswordSchema = z.object({ password: newPasswordField });
/** Following a sign-up link: the password chosen at sign-up, typed again. */
export const signUpConfirmSchema = z.object({
	password: z.string().min(1, 'Enter the password you chose.')
});

/** Turns a shop name into an address: "Fernhill Precision" → "fernhill-precision". */
export function slugify(name: string): string {
	return name
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.toLowerCase()
		.replace(/[^a-z0-9]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, 48)
		.replace(/-+$/g, '');
}
