import type { Knex } from 'knex';

/**
 * Provisioning a shop at sign-up without giving the app role DDL rights (least privilege). Both
 * functions are SECURITY DEFINER, owned by the owner role that runs migrations
 * (src/lib/server/db/roles.ts):
 *
 * - `dk_begin_shop_schema(schema)`: creates the new, empty schema `shop_<id>` (owned by the
 *   owner role) and the shop's role, and lets the caller create tables in that one schema for
 *   the rest of its transaction. Refuses a name that is not `shop_<digits>` or that exists.
 * - `dk_seal_shop_schema(schema)`: hands every object in the schema to the owner role, takes
 *   the caller's CREATE away again, and grants the shop's role DML on its own tables — but not
 *   UPDATE, DELETE or TRUNCATE on the append-only ones (tables with a `refuse_change` trigger).
 *   Idempotent: `migrate` calls it after migrating each shop schema, so new tables get grants.
 *
 * The caller runs the shop migrations between the two, in the same transaction as the shop's
 * row, so a failure still leaves nothing behind.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`create or replace function public.dk_begin_shop_schema(p_schema text)
		returns void language plpgsql security definer set search_path = pg_catalog as $fn$
		declare
			v_role text := current_database() || '__' || p_schema;
		begin
			if p_schema !~ '^shop_[0-9]{1,18}$' then
				raise exception 'not a shop schema name: %', p_schema;
			end if;
			execute format('create schema %I', p_schema);
			if not exists (select 1 from pg_roles where rolname = v_role) then
				execute format('create role %I nologin', v_role);
			end if;
			execute format('grant datumkeep_shop to %I', v_role);
			execute format('grant %I to datumkeep_app', v_role);
			if session_user <> current_user then
				execute format('grant usage, create on schema %I to %I', p_schema, session_user);
			end if;
		end $fn$`);
	await knex.raw(`create or replace function public.dk_seal_shop_schema(p_schema text)
		returns void language plpgsql security definer set search_path = pg_catalog as $fn$
		declare
			v_role text := current_database() || '__' || p_schema;
			v_owner text := current_user;
			r record;
		begin
			if p_schema !~ '^shop_[0-9]{1,18}$' then
				raise exception 'not a shop schema name: %', p_schema;
			end if;
			if not exists (select 1 from pg_roles where rolname = v_role) then
				execute format('create role %I nologin', v_role);
				execute format('grant datumkeep_shop to %I', v_role);
				execute format('grant %I to datumkeep_app', v_role);
			end if;
			for r in select c.relname, c.relkind from pg_class c join pg_namespace n on n.oid = c.relnamespace
				where n.nspname = p_schema and c.relkind in ('r', 'p', 'v', 'm')
				and pg_get_userbyid(c.relowner) <> v_owner loop
				execute format('alter table %I.%I owner to %I', p_schema, r.relname, v_owner);
			end loop;
			for r in select c.relname from pg_class c join pg_namespace n on n.oid = c.relnamespace
				where n.nspname = p_schema and c.relkind = 'S'
				and pg_get_userbyid(c.relowner) <> v_owner loop
				execute format('alter sequence %I.%I owner to %I', p_schema, r.relname, v_owner);
			end loop;
			for r in select p.oid::regprocedure as sig from pg_proc p join pg_namespace n on n.oid = p.pronamespace
				where n.nspname = p_schema and pg_get_userbyid(p.proowner) <> v_owner loop
				execute format('alter function %s owner to %I', r.sig, v_owner);
			end loop;
			if session_user <> v_owner and exists (select 1 from pg_roles where rolname = session_user and not rolsuper) then
				execute format('revoke create on schema %I from %I', p_schema, session_user);
			end if;
			execute format('grant usage on schema %I to %I', p_schema, v_role);
			execute format('grant select, insert, update, delete on all tables in schema %I to %I', p_schema, v_role);
			execute format('grant usage, select on all sequences in schema %I to %I', p_schema, v_role);
			execute format('revoke all on table %I.knex_migrations, %I.knex_migrations_lock from %I',
				p_schema, p_schema, v_role);
			for r in select distinct c.relname from pg_trigger t
				join pg_class c on c.oid = t.tgrelid
				join pg_namespace n on n.oid = c.relnamespace
				join pg_proc p on p.oid = t.tgfoid
				where n.nspname = p_schema and p.proname = 'refuse_change' and t.tgname like '%_append_only' loop
				execute format('revoke update, delete, truncate on table %I.%I from %I', p_schema, r.relname, v_role);
			end loop;
		end $fn$`);
	// Only the roles that provision may call them.
	for (const fn of ['dk_begin_shop_schema(text)', 'dk_seal_shop_schema(text)']) {
		await knex.raw(`revoke all on function public.${fn} from public`);
		await knex.raw(`do $$ begin
			if exists (select 1 from pg_roles where rolname = 'datumkeep_app') then
				execute 'grant execute on function public.${fn} to datumkeep_app';
			end if;
		end $$`);
	}
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop function if exists public.dk_seal_shop_schema(text)');
	await knex.raw('drop function if exists public.dk_begin_shop_schema(text)');
}
