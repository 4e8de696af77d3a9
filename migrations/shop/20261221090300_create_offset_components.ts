import type { Knex } from 'knex';

/**
 * The other components of an offset record (issue 20), beside the Z values that
 * `offset_versions` / `current_offsets` keep: a work offset's X and Y, and per tool (H/D number)
 * the radius geometry and the length and radius wear. Kept in their own append-only table with
 * a `component` column rather than as extra rows of `offset_versions`, so every existing query
 * of `offset_versions` and `current_offsets` (history, jump checks, the board, read-backs, the
 * gate) keeps meaning Z without a filter added to it. The length geometry of a tool stays the
 * Z value in `offset_versions`.
 *
 * `current_offset_components` is the newest version of each (machine, kind, register,
 * component), kept by an AFTER INSERT trigger exactly as `current_offsets` is.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('offset_component_versions', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** 'work' (a fixture's register) or 'tool' (an H/D number). */
		t.text('register_kind').notNullable();
		t.text('register').notNullable();
		/** work: 'x' | 'y'; tool: 'radius' | 'length-wear' | 'radius-wear'. */
		t.text('component').notNullable();
		t.decimal('value', 12, 4).notNullable();
		t.text('units').notNullable();
		/** For radius and radius wear: whether the control keeps a 'radius' or a 'diameter'. */
		t.text('cutter_register');
		/** 'edge' (from an edge reading), 'entered' (typed by a lead), 'part' (a measured part). */
		t.text('source').notNullable();
		t.bigInteger('edge_reading_id').references('edge_readings.id');
		t.bigInteger('part_measurement_id').references('part_measurements.id');
		t.text('reason').notNullable().defaultTo('');
		t.text('override_reason').notNullable().defaultTo('');
		t.specificType('overridden_findings', 'text[]').notNullable().defaultTo('{}');
		t.bigInteger('created_by');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(
			['machine_id', 'register_kind', 'register', 'component', 'created_at'],
			'offset_component_versions_register_idx'
		);
	});
	await knex.raw(`alter table offset_component_versions
		add constraint offset_component_versions_component_check check (
			(register_kind = 'work' and component in ('x', 'y'))
			or (register_kind = 'tool' and component in ('radius', 'length-wear', 'radius-wear'))),
		add constraint offset_component_versions_units_check check (units in ('inch', 'mm')),
		add constraint offset_component_versions_cutter_check check (cutter_register is null
			or cutter_register in ('radius', 'diameter')),
		add constraint offset_component_versions_source_check check (
			(source = 'edge' and edge_reading_id is not null)
			or (source = 'part' and part_measurement_id is not null)
			or source = 'entered'),
		add constraint offset_component_versions_override_reason check
			(cardinality(overridden_findings) = 0 or length(btrim(override_reason)) > 0)`);
	await knex.raw(
		'create trigger offset_component_versions_append_only before update or delete on offset_component_versions for each row execute function refuse_change()'
	);
	await knex.raw(
		'create trigger offset_component_versions_no_truncate before truncate on offset_component_versions execute function refuse_change()'
	);

	await knex.schema.createTable('current_offset_components', (t) => {
		t.bigInteger('machine_id').notNullable();
		t.text('register_kind').notNullable();
		t.text('register').notNullable();
		t.text('component').notNullable();
		t.bigInteger('version_id').notNullable();
		t.decimal('value', 12, 4).notNullable();
		t.timestamp('created_at', { useTz: true }).notNullable();
		t.primary(['machine_id', 'register_kind', 'register', 'component'], {
			constraintName: 'current_offset_components_pkey'
		});
		t.foreign('machine_id', 'current_offset_components_machine_fk').references('machines.id');
		t.foreign('version_id', 'current_offset_components_version_fk').references(
			'offset_component_versions.id'
		);
	});
	await knex.raw(`create function keep_current_offset_component() returns trigger language plpgsql
		set search_path from current as $$
		begin
			insert into current_offset_components as c (machine_id, register_kind, register, component,
				version_id, value, created_at)
			values (new.machine_id, new.register_kind, new.register, new.component, new.id, new.value,
				new.created_at)
			on conflict (machine_id, register_kind, register, component) do update set
				version_id = excluded.version_id,
				value = excluded.value,
				created_at = excluded.created_at
			where (excluded.created_at, excluded.version_id) > (c.created_at, c.version_id);
			return null;
		end $$`);
	await knex.raw(
		'create trigger offset_component_versions_keep_current after insert on offset_component_versions for each row execute function keep_current_offset_component()'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(
		'drop trigger offset_component_versions_keep_current on offset_component_versions'
	);
	await knex.raw('drop function keep_current_offset_component()');
	await knex.schema.dropTable('current_offset_components');
	await knex.schema.dropTable('offset_component_versions');
}
