import type { Knex } from 'knex';

/**
 * Change notifications for the app's in-memory caches (src/lib/server/db/change-feed.ts).
 * PostgreSQL delivers a NOTIFY only when its transaction commits, in commit order, and folds
 * repeats within one transaction — so a cache that listens can never be told about a change
 * that was rolled back, and a bulk insert costs one message.
 *
 * - `notify_board_change()`: a statement-level trigger function for the tables the fleet board
 *   reads; the message is `board:<schema>` (the shop's schema, from the table that changed).
 * - `notify_user_change()`: a row-level trigger on public.users (update, delete); the message
 *   is `user:<id>`, so a cached signed-in user is dropped when the account changes; a
 *   TRUNCATE of users says `users` (every cached user is dropped).
 * - `notify_memberships_change()`: statement-level on public.memberships and public.shops; the
 *   message is `memberships`, and the guard's cache of who belongs to which shop with which
 *   role starts again from the database (such changes are rare: invitations, role changes,
 *   removals, renames, billing updates).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`create or replace function public.notify_board_change() returns trigger language plpgsql as $$
		begin
			perform pg_notify('datumkeep_changes', 'board:' || tg_table_schema);
			return null;
		end $$`);
	await knex.raw(`create or replace function public.notify_user_change() returns trigger language plpgsql as $$
		begin
			perform pg_notify('datumkeep_changes', 'user:' || old.id);
			return null;
		end $$`);
	await knex.raw(`create trigger users_notify_change after update or delete on public.users
		for each row execute function public.notify_user_change()`);
	await knex.raw(`create or replace function public.notify_users_truncated() returns trigger language plpgsql as $$
		begin
			perform pg_notify('datumkeep_changes', 'users');
			return null;
		end $$`);
	await knex.raw(`create trigger users_notify_truncate after truncate on public.users
		for each statement execute function public.notify_users_truncated()`);
	await knex.raw(`create or replace function public.notify_memberships_change() returns trigger language plpgsql as $$
		begin
			perform pg_notify('datumkeep_changes', 'memberships');
			return null;
		end $$`);
	for (const table of ['memberships', 'shops']) {
		await knex.raw(
			`create trigger ?? after insert or update or delete or truncate on ??
			for each statement execute function public.notify_memberships_change()`,
			[`${table}_notify_change`, `public.${table}`]
		);
	}
}

/** Roll the shops' `…_notify_board_changes` back first: their triggers use notify_board_change. */
export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop trigger if exists users_notify_truncate on public.users');
	await knex.raw('drop function if exists public.notify_users_truncated()');
	for (const table of ['memberships', 'shops'])
		await knex.raw('drop trigger if exists ?? on ??', [
			`${table}_notify_change`,
			`public.${table}`
		]);
	await knex.raw('drop function if exists public.notify_memberships_change()');
	await knex.raw('drop trigger if exists users_notify_change on public.users');
	await knex.raw('drop function if exists public.notify_user_change()');
	await knex.raw('drop function if exists public.notify_board_change()');
}
