import type { Knex } from 'knex';

/**
 * Machines and their reference surfaces. A reference is versioned: re-establishing it adds a
 * row (version + 1) and never edits the old one, so every reading can say which reference it
 * was measured against (and is `stale-reference` once a newer one exists).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('machines', (t) => {
		t.bigIncrements('id').primary();
		t.text('name').notNullable().unique('machines_name_unique');
		t.text('units').notNullable();
		t.decimal('z_travel', 12, 4).notNullable();
		t.decimal('resolution', 10, 5).notNullable();
		t.text('control_style').notNullable().defaultTo('rs274ngc');
		t.text('convention').notNullable().defaultTo('reference-touch');
		t.integer('master_tool_h');
		t.text('notes').notNullable().defaultTo('');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.timestamp('archived_at', { useTz: true });
	});
	await knex.raw(`alter table machines
		add constraint machines_units_check check (units in ('inch','mm')),
		add constraint machines_z_travel_check check (z_travel > 0),
		add constraint machines_resolution_check check (resolution > 0),
		add constraint machines_control_style_check check (control_style in ('rs274ngc','iso')),
		add constraint machines_convention_check check (convention in ('reference-touch','gauge-length','master-tool'))`);

	await knex.schema.createTable('reference_surfaces', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		t.integer('version').notNullable();
		t.text('instrument').notNullable();
		t.decimal('height', 12, 4).notNullable().defaultTo(0);
		t.text('location').notNullable().defaultTo('');
		/** Machine Z of the spindle gauge line sitting on the surface, when known. */
		t.decimal('gauge_line_z', 12, 4);
		t.bigInteger('established_by');
		t.timestamp('established_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.text('note').notNullable().defaultTo('');
		t.unique(['machine_id', 'version'], { indexName: 'reference_surfaces_machine_version_unique' });
	});
	await knex.raw(`alter table reference_surfaces
		add constraint reference_surfaces_instrument_check check (instrument in ('1-2-3 block','gauge block','tool setter','other'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('reference_surfaces');
	await knex.schema.dropTable('machines');
}
