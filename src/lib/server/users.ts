import type { Knex } from 'knex';
import type { UserRow } from './db/tables';

export interface UserAccount {
	id: number;
	email: string;
	name: string;
	passwordHash: string | null;
	/** Session cookies issued under another generation are refused (hooks.server.ts). */
	sessionGeneration: number;
}

const COLUMNS = ['id', 'email', 'name', 'password_hash', 'session_generation'] as const;
const toUser = (r: Pick<UserRow, (typeof COLUMNS)[number]>): UserAccount => ({
	id: Number(r.id),
	email: r.email,
	name: r.name,
	passwordHash: r.password_hash,
	sessionGeneration: r.session_generation
});

export async function findUserByEmail(knex: Knex, email: string): Promise<UserAccount | undefined> {
	const r = await knex('public.users')
		.whereRaw('lower(email) = lower(?)', [email.trim()])
		.first([...COLUMNS]);
	return r ? toUser(r) : undefined;
}

export async function findUserById(knex: Knex, id: number): Promise<UserAccount | undefined> {
	const r = await knex('public.users')
		.where({ id })
		.first([...COLUMNS]);
	return r ? toUser(r) : undefined;
}

/**
 * Ends every session of this person at once (password reset, sign-out, removal from a shop):
 * cookies carry the generation they were issued under, and the update drops the cached ones.
 */
export async function endAllSessions(knex: Knex, userId: number): Promise<void> {
	await knex('public.users').where({ id: userId }).increment('session_generation', 1);
}
