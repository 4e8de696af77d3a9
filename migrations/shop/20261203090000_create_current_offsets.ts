import type { Knex } from 'knex';

/**
 * The fleet board's read model, kept by triggers in the same transaction as the
 * append-only rows it summarises, so it can never disagree with them:
 *
 * - `current_offsets`: one row per register (machine, kind, register) holding its newest offset
 *   version — the row a `DISTINCT ON (machine_id, register_kind, register) … ORDER BY
 *   created_at desc, id desc` over `offset_versions` returns. An AFTER INSERT trigger on
 *   `offset_versions` upserts it and keeps whichever of the stored and the new version is newer
 *   by (created_at, id): a conversion's version carries its source's created_at with a higher
 *   id, so it wins; a version inserted late with an older created_at does not.
 * - `machines.last_reading_at`: the newest `readings.taken_at` of the machine, raised by an
 *   AFTER INSERT trigger on `readings` (never lowered).
 *
 * offset_versions and readings stay append-only; these triggers only write the other tables.
 * Both are backfilled here from the existing rows. The trigger functions pin the search path
 * of the schema they were created in (the shop's), so they write that shop's tables whatever
 * the caller's search path.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('current_offsets', (t) => {
		t.bigInteger('machine_id').notNullable();
		/** 'work' or 'tool', as in offset_versions. */
		t.text('register_kind').notNullable();
		t.text('register').notNullable();
		/** The newest offset version of the register (newest created_at, then highest id). */
		t.bigInteger('offset_version_id').notNullable();
		t.decimal('value', 12, 4).notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable();
		t.integer('reference_version').notNullable();
		t.bigInteger('reading_id');
		t.primary(['machine_id', 'register_kind', 'register'], {
			constraintName: 'current_offsets_pkey'
		});
		t.foreign('machine_id', 'current_offsets_machine_fk').references('machines.id');
		t.foreign('offset_version_id', 'current_offsets_version_fk').references('offset_versions.id');
	});

	await knex.raw(`create function keep_current_offset() returns trigger language plpgsql
		set search_path from current as $$
		begin
			insert into current_offsets as c (machine_id, register_kind, register, offset_version_id,
				value, created_at, reference_version, reading_id)
			values (new.machine_id, new.register_kind, new.register, new.id,
				new.value, new.created_at, new.reference_version, new.reading_id)
			on conflict (machine_id, register_kind, register) do update set
				offset_version_id = excluded.offset_version_id,
				value = excluded.value,
				created_at = excluded.created_at,
				reference_version = excluded.reference_version,
				reading_id = excluded.reading_id
			where (excluded.created_at, excluded.offset_version_id) > (c.created_at, c.offset_version_id);
			return null;
		end $$`);
	await knex.raw(
		'create trigger offset_versions_keep_current after insert on offset_versions for each row execute function keep_current_offset()'
	);
	await knex.raw(`insert into current_offsets (machine_id, register_kind, register,
			offset_version_id, value, created_at, reference_version, reading_id)
		select distinct on (machine_id, register_kind, register)
			machine_id, register_kind, register, id, value, created_at, reference_version, reading_id
		from offset_versions
		order by machine_id, register_kind, register, created_at desc, id desc`);

	await knex.schema.alterTable('machines', (t) => {
		/** Newest readings.taken_at of the machine (kept by the readings_keep_last trigger). */
		t.timestamp('last_reading_at', { useTz: true });
	});
	await knex.raw(`create function keep_last_reading() returns trigger language plpgsql
		set search_path from current as $$
		begin
			update machines set last_reading_at = new.taken_at
			where id = new.machine_id
				and (last_reading_at is null or last_reading_at < new.taken_at);
			return null;
		end $$`);
	await knex.raw(
		'create trigger readings_keep_last after insert on readings for each row execute function keep_last_reading()'
	);
	await knex.raw(`update machines m set last_reading_at = r.newest
		from (select machine_id, max(taken_at) as newest from readings group by machine_id) r
		where r.machine_id = m.id`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop trigger readings_keep_last on readings');
	await knex.raw('drop function keep_last_reading()');
	await knex.schema.alterTable('machines', (t) => t.dropColumn('last_reading_at'));
	await knex.raw('drop trigger offset_versions_keep_current on offset_versions');
	await knex.raw('drop function keep_current_offset()');
	await knex.schema.dropTable('current_offsets');
}
