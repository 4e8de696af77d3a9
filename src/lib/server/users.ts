import type { Knex } from 'knex';

export interface UserRow {
	id: number;
	email: string;
	name: string;
	passwordHash: string | null;
}

export async function findUserByEmail(knex: Knex, email: string): Promise<UserRow | undefined> {
	const r = await knex('public.users')
		.whereRaw('lower(email) = lower(?)', [email.trim()])
		.first('id', 'email', 'name', 'password_hash');
	return r
		? { id: Number(r.id), email: r.email, name: r.name, passwordHash: r.password_hash }
		: undefined;
}

export async function findUserById(knex: Knex, id: number): Promise<UserRow | undefined> {
	const r = await knex('public.users').where({ id }).first('id', 'email', 'name', 'password_hash');
	return r
		? { id: Number(r.id), email: r.email, name: r.name, passwordHash: r.password_hash }
		: undefined;
}
