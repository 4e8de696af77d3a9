import type { Knex } from 'knex';

/**
 * Edge readings (issue 20): the machine X or Y an operator read with an edge finder or probe of
 * known diameter at one edge (datum `edge`) or at two opposite edges (datum `centre`), with the
 * side each edge was approached from. Append-only like readings: a wrong one is corrected by a
 * newer one that points at it with a reason. `position` is what the engine worked out (the
 * edge, or the mean of the two edges), which becomes the work offset's X or Y.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('edge_readings', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** The work register, "G54" or "G54.1 P3". */
		t.text('register').notNullable();
		t.text('axis').notNullable();
		t.text('datum').notNullable();
		/** For a centre: 'outside' (a boss) or 'inside' (a bore, pocket or slot). */
		t.text('feature');
		t.decimal('first_coordinate', 12, 4).notNullable();
		t.text('first_side').notNullable();
		t.decimal('second_coordinate', 12, 4);
		t.text('second_side');
		t.decimal('probe_diameter', 12, 4).notNullable();
		t.decimal('position', 12, 4).notNullable();
		t.text('units').notNullable();
		t.text('instrument').notNullable().defaultTo('');
		t.bigInteger('corrects_edge_reading_id').references('edge_readings.id');
		t.text('reason').notNullable().defaultTo('');
		t.text('override_reason').notNullable().defaultTo('');
		t.specificType('overridden_findings', 'text[]').notNullable().defaultTo('{}');
		t.bigInteger('taken_by');
		t.timestamp('taken_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['machine_id', 'register', 'axis', 'taken_at'], 'edge_readings_register_idx');
	});
	await knex.raw(`alter table edge_readings
		add constraint edge_readings_axis_check check (axis in ('X', 'Y')),
		add constraint edge_readings_datum_check check (datum in ('edge', 'centre')),
		add constraint edge_readings_sides_check check (first_side in ('minus', 'plus')
			and (second_side is null or second_side in ('minus', 'plus'))),
		add constraint edge_readings_centre_check check ((datum = 'edge' and second_coordinate is null
			and feature is null) or (datum = 'centre' and second_coordinate is not null
			and second_side is not null and feature in ('outside', 'inside'))),
		add constraint edge_readings_probe_check check (probe_diameter > 0),
		add constraint edge_readings_units_check check (units in ('inch', 'mm')),
		add constraint edge_readings_correction_reason check
			(corrects_edge_reading_id is null or length(reason) > 0),
		add constraint edge_readings_override_reason check
			(cardinality(overridden_findings) = 0 or length(btrim(override_reason)) > 0)`);
	await knex.raw(
		'create trigger edge_readings_append_only before update or delete on edge_readings for each row execute function refuse_change()'
	);
	await knex.raw(
		'create trigger edge_readings_no_truncate before truncate on edge_readings execute function refuse_change()'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('edge_readings');
}
