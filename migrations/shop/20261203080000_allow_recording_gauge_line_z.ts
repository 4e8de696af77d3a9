import type { Knex } from 'knex';

/**
 * Reference versions stay append-only with one exception: a gauge-line Z that was not known
 * when the reference was established may be filled in once (e.g. when a lead converts the
 * machine to gauge-length offsets and measures R). Everything else about a version, and a
 * gauge-line Z once recorded, can still never change; a new value needs a new version.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.raw(`create or replace function refuse_reference_change() returns trigger language plpgsql as $$
		begin
			if tg_op = 'UPDATE'
				and old.gauge_line_z is null and new.gauge_line_z is not null
				and (to_jsonb(new) - 'gauge_line_z') = (to_jsonb(old) - 'gauge_line_z') then
				return new;
			end if;
			raise exception 'reference_surfaces rows are append-only: record a new reference version instead'
				using errcode = 'check_violation';
		end $$`);
	await knex.raw('drop trigger reference_surfaces_append_only on reference_surfaces');
	await knex.raw(
		'create trigger reference_surfaces_append_only before update or delete on reference_surfaces for each row execute function refuse_reference_change()'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop trigger reference_surfaces_append_only on reference_surfaces');
	await knex.raw(
		'create trigger reference_surfaces_append_only before update or delete on reference_surfaces for each row execute function refuse_change()'
	);
	await knex.raw('drop function refuse_reference_change()');
}
