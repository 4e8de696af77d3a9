import type { Knex } from 'knex';

/**
 * Dropping a deleted shop's schema without giving the app role DDL rights: the schema is owned by
 * the owner role, so the worker that purges a shop after its grace period calls this SECURITY
 * DEFINER function. It refuses any schema whose shop is not due: the shop row must name the
 * schema and have its purge time passed, so the app role cannot drop a live shop through it.
 * The shop's own role goes with it (nothing is left that it owns or may use).
 */
export async function up(knex: Knex): Promise<void> {
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
			if exists (select 1 from pg_roles where rolname = v_role) then
				begin
					execute format('drop role %I', v_role);
				exception when others then
					raise notice 'shop role % kept: %', v_role, sqlerrm;
				end;
			end if;
		end $fn$`);
	await knex.raw('revoke all on function public.dk_drop_shop_schema(text) from public');
	await knex.raw(`do $$ begin
		if exists (select 1 from pg_roles where rolname = 'datumkeep_app') then
			execute 'grant execute on function public.dk_drop_shop_schema(text) to datumkeep_app';
		end if;
	end $$`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop function if exists public.dk_drop_shop_schema(text)');
}
