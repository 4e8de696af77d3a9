import type { Knex } from 'knex';

/**
 * Dropping a shop's schema needs the shop's token (docs/SECURITY.md). Before, the drop function
 * checked only that the shop row's purge time had passed — and the app role may write
 * `public.shops`, so SQL injected as the app role could mark any shop due and drop it. Now the
 * caller must also bring the shop's token (HMAC of AUTH_SECRET, db/shop-token.ts), checked
 * against the key the owner role keeps in `public.dk_shop_keys`: the worker, which knows the
 * secret, can purge a shop; injected SQL, which cannot read the keys or derive a token, cannot.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw('drop function if exists public.dk_drop_shop_schema(text)');
	await knex.raw(`create or replace function public.dk_drop_shop_schema(p_schema text, p_token text)
		returns void language plpgsql security definer set search_path = pg_catalog as $fn$
		declare
			v_role text := current_database() || '__' || p_schema;
			v_hash bytea;
		begin
			if p_schema !~ '^shop_[0-9]{1,18}$' then
				raise exception 'not a shop schema name: %', p_schema;
			end if;
			select k.token_hash into v_hash from public.dk_shop_keys k where k.schema_name = p_schema;
			if v_hash is null or p_token is null or sha256(convert_to(p_token, 'UTF8')) <> v_hash then
				raise exception 'the token given does not open shop schema %', p_schema
					using errcode = 'insufficient_privilege';
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
	await knex.raw('revoke all on function public.dk_drop_shop_schema(text, text) from public');
	await knex.raw(`do $$ begin
		if exists (select 1 from pg_roles where rolname = 'datumkeep_app') then
			execute 'grant execute on function public.dk_drop_shop_schema(text, text) to datumkeep_app';
		end if;
	end $$`);
}

export async function down(knex: Knex): Promise<void> {
	// The one-argument function of the shop-keys migration comes back when that one is re-run.
	await knex.raw('drop function if exists public.dk_drop_shop_schema(text, text)');
}
