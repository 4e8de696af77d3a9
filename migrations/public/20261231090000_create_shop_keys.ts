import type { Knex } from 'knex';
import * as provisioning from './20261213090100_create_shop_provisioning_functions';
import * as dropFunction from './20261222090000_create_shop_drop_function';

/**
 * The second lock on every shop table (docs/SECURITY.md; src/lib/server/db/shop-token.ts). The
 * app role may `SET ROLE` to any shop's role, so each shop table also gets row-level security
 * that opens only when the transaction carries the shop's token:
 *
 * - `public.dk_shop_keys`: SHA-256 of each shop schema's token. The owner role alone reads or
 *   writes it (not the app role, not the shop roles).
 * - `dk_shop_ok(schema)`: SECURITY DEFINER, STABLE. True when sha256 of `datumkeep.shop_token`
 *   matches the schema's key; otherwise it raises (insufficient_privilege) with a message that
 *   says which: no token, no key, or the wrong token. Raising rather than answering false makes
 *   a mismatched AUTH_SECRET loud instead of a shop that looks empty.
 * - `dk_begin_shop_schema(schema, token)`: as before, and stores the new schema's key. It only
 *   ever keys a schema it has just created, so the app role cannot re-key an existing shop.
 * - `dk_seal_shop_schema(schema)`: as before, and turns on row-level security with the policy
 *   `dk_shop_key` on every table of the schema that lacks it (migrate runs it after every shop
 *   migration, so future tables are covered). Not FORCEd: the owner role (migrations) and
 *   superusers (scripts) pass as before.
 * - `dk_drop_shop_schema(schema)`: as before, and forgets the key.
 * Keys of existing schemas are written by `migrate` (db/migrate.ts), which knows the secret.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`create table public.dk_shop_keys (
		schema_name text primary key check (schema_name ~ '^shop_[0-9]{1,18}$'),
		token_hash bytea not null check (length(token_hash) = 32),
		keyed_at timestamptz not null default now()
	)`);
	// The owner's default privileges would hand the app DML on a new public table: not this one.
	await knex.raw('revoke all on table public.dk_shop_keys from public');
	await knex.raw(`do $$ begin
		if exists (select 1 from pg_roles where rolname = 'datumkeep_app') then
			execute 'revoke all on table public.dk_shop_keys from datumkeep_app';
		end if;
		if exists (select 1 from pg_roles where rolname = 'datumkeep_shop') then
			execute 'revoke all on table public.dk_shop_keys from datumkeep_shop';
		end if;
	end $$`);

	// One call per query and table (the policy wraps it in a sub-select: an init plan).
	await knex.raw(`create or replace function public.dk_shop_ok(p_schema text)
		returns boolean language plpgsql stable security definer set search_path = pg_catalog as $fn$
		declare
			v_token text := current_setting('datumkeep.shop_token', true);
			v_hash bytea;
		begin
			select k.token_hash into v_hash from public.dk_shop_keys k where k.schema_name = p_schema;
			if v_hash is null then
				raise exception 'shop schema % has no key: run npm run migrate with the app''s AUTH_SECRET', p_schema
					using errcode = 'insufficient_privilege';
			end if;
			if v_token is null or v_token = '' then
				raise exception 'no shop token in this transaction: enter the shop with withShop (is AUTH_SECRET set?)'
					using errcode = 'insufficient_privilege';
			end if;
			if sha256(convert_to(v_token, 'UTF8')) <> v_hash then
				raise exception 'this transaction''s shop token does not open %', p_schema
					using errcode = 'insufficient_privilege';
			end if;
			return true;
		end $fn$`);
	await knex.raw('revoke all on function public.dk_shop_ok(text) from public');
	await knex.raw(`do $$ begin
		if exists (select 1 from pg_roles where rolname = 'datumkeep_shop') then
			execute 'grant execute on function public.dk_shop_ok(text) to datumkeep_shop';
		end if;
	end $$`);

	await knex.raw('drop function if exists public.dk_begin_shop_schema(text)');
	await knex.raw(`create or replace function public.dk_begin_shop_schema(p_schema text, p_token text)
		returns void language plpgsql security definer set search_path = pg_catalog as $fn$
		declare
			v_role text := current_database() || '__' || p_schema;
		begin
			if p_schema !~ '^shop_[0-9]{1,18}$' then
				raise exception 'not a shop schema name: %', p_schema;
			end if;
			if p_token is null or length(p_token) < 32 then
				raise exception 'a shop token of at least 32 characters is needed for %', p_schema;
			end if;
			-- Fails when the schema exists: only a brand-new schema is ever keyed here.
			execute format('create schema %I', p_schema);
			insert into public.dk_shop_keys (schema_name, token_hash)
				values (p_schema, sha256(convert_to(p_token, 'UTF8')))
				on conflict (schema_name) do update set token_hash = excluded.token_hash, keyed_at = now();
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
			-- The second lock: row-level security keyed by the shop's token, on every table (only
			-- where missing: ALTER TABLE takes a strong lock, and this runs at every migrate).
			for r in select c.oid, c.relname, c.relrowsecurity from pg_class c
				join pg_namespace n on n.oid = c.relnamespace
				where n.nspname = p_schema and c.relkind in ('r', 'p') loop
				if not r.relrowsecurity then
					execute format('alter table %I.%I enable row level security', p_schema, r.relname);
				end if;
				if not exists (select 1 from pg_policy p where p.polrelid = r.oid and p.polname = 'dk_shop_key') then
					execute format('create policy dk_shop_key on %I.%I using ((select public.dk_shop_ok(%L))) with check ((select public.dk_shop_ok(%L)))',
						p_schema, r.relname, p_schema, p_schema);
				end if;
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

	await knex.raw(`create or replace function public.dk_drop_shop_schema(p_schema text)
		returns void language plpgsql security definer set search_path = pg_catalog as $fn$
		declare
			v_role text := current_database() || '__' || p_schema;
		begin
			if p_schema !~ '^shop_[0-9]{1,18}$' then
				raise exception 'not a shop schema name: %', p_schema;
			end if;
			if not exists (select 1 from public.shops s where s.schema_name = p_schema
				and s.purge_after is not null and s.purge_after <= now()) then
				raise exception 'shop schema % is not due to be dropped', p_schema;
			end if;
			execute format('drop schema if exists %I cascade', p_schema);
			delete from public.dk_shop_keys where schema_name = p_schema;
			if exists (select 1 from pg_roles where rolname = v_role) then
				begin
					execute format('drop role %I', v_role);
				exception when others then
					raise notice 'shop role % kept: %', v_role, sqlerrm;
				end;
			end if;
		end $fn$`);

	// Only the roles that provision may call them.
	for (const fn of ['dk_begin_shop_schema(text, text)', 'dk_seal_shop_schema(text)']) {
		await knex.raw(`revoke all on function public.${fn} from public`);
		await knex.raw(`do $$ begin
			if exists (select 1 from pg_roles where rolname = 'datumkeep_app') then
				execute 'grant execute on function public.${fn} to datumkeep_app';
			end if;
		end $$`);
	}
}

export async function down(knex: Knex): Promise<void> {
	// Policies go with the function (cascade); the earlier functions come back as they were.
	await knex.raw('drop function if exists public.dk_shop_ok(text) cascade');
	await knex.raw(`do $$ declare r record; begin
		for r in select n.nspname, c.relname from pg_class c join pg_namespace n on n.oid = c.relnamespace
			where n.nspname ~ '^shop_[0-9]+$' and c.relkind in ('r', 'p') and c.relrowsecurity loop
			execute format('alter table %I.%I disable row level security', r.nspname, r.relname);
		end loop;
	end $$`);
	await knex.raw('drop function if exists public.dk_begin_shop_schema(text, text)');
	await knex.raw('drop table if exists public.dk_shop_keys');
	await provisioning.up(knex);
	await dropFunction.up(knex);
}
