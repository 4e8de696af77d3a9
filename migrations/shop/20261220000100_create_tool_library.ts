import type { Knex } from 'knex';

const APPEND_ONLY = [
	'assembly_measurements',
	'presetter_mappings',
	'presetter_imports',
	'assembly_assignments'
];

/**
 * The shop's tool library (issue 20, tools measured off the machine): tool assemblies (holder +
 * cutter + stick-out) that belong to the shop, not to a machine, and their presetter
 * measurements. Measurements are append-only like readings: a re-measure is a new row, the
 * newest is the assembly's length. `presetter_mappings` keeps the shop's CSV column mapping
 * (newest row wins), `presetter_imports` one row per imported file, and `assembly_assignments`
 * every time an assembly was put in a machine pocket with the reading that set its H.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('tool_assemblies', (t) => {
		t.bigIncrements('id').primary();
		/** The shop's own label for the assembly (e.g. "A-12"), as the presetter export names it. */
		t.text('name').notNullable();
		t.text('holder').notNullable().defaultTo('');
		t.text('cutter').notNullable().defaultTo('');
		/** Stick-out from the holder's face, in `units`. */
		t.decimal('stick_out', 12, 4);
		t.text('units').notNullable();
		t.bigInteger('created_by');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(`alter table tool_assemblies
		add constraint tool_assemblies_units_check check (units in ('inch','mm')),
		add constraint tool_assemblies_stick_out_check check (stick_out is null or stick_out >= 0)`);
	await knex.raw('create unique index tool_assemblies_name_key on tool_assemblies (lower(name))');

	await knex.schema.createTable('presetter_imports', (t) => {
		t.bigIncrements('id').primary();
		t.text('file_name').notNullable().defaultTo('');
		t.integer('row_count').notNullable();
		/** The mapping, units and decimal separator the file was read with. */
		t.jsonb('settings').notNullable();
		t.bigInteger('imported_by');
		t.timestamp('imported_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});

	await knex.schema.createTable('assembly_measurements', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('assembly_id').notNullable().references('tool_assemblies.id');
		/** Tip below the holder's gauge line, in `units`. */
		t.decimal('gauge_length', 12, 4).notNullable();
		t.decimal('radius', 12, 4);
		t.text('units').notNullable();
		/** Which presetter measured it (free text: the shop's name for the instrument). */
		t.text('presetter').notNullable().defaultTo('');
		t.timestamp('measured_at', { useTz: true }).notNullable();
		/** 'typed' (entered on the page or the API) or 'csv' (a presetter export). */
		t.text('source').notNullable();
		t.bigInteger('import_id').references('presetter_imports.id');
		t.text('note').notNullable().defaultTo('');
		t.bigInteger('recorded_by');
		t.timestamp('recorded_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['assembly_id', 'measured_at'], 'assembly_measurements_assembly_idx');
	});
	await knex.raw(`alter table assembly_measurements
		add constraint assembly_measurements_units_check check (units in ('inch','mm')),
		add constraint assembly_measurements_length_check check (gauge_length > 0),
		add constraint assembly_measurements_radius_check check (radius is null or radius >= 0),
		add constraint assembly_measurements_source_check check (source in ('typed','csv')),
		add constraint assembly_measurements_import_check check (source = 'typed' or import_id is not null)`);

	await knex.schema.createTable('presetter_mappings', (t) => {
		t.bigIncrements('id').primary();
		/** Field → the CSV header that holds it ({ name: "Tool ID", gaugeLength: "Z", … }). */
		t.jsonb('columns').notNullable();
		t.text('units').notNullable();
		t.text('decimal_separator').notNullable();
		t.text('delimiter').notNullable();
		t.bigInteger('created_by');
		t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(`alter table presetter_mappings
		add constraint presetter_mappings_units_check check (units in ('inch','mm')),
		add constraint presetter_mappings_decimal_check check (decimal_separator in ('point','comma')),
		add constraint presetter_mappings_delimiter_check check (delimiter in ('comma','semicolon','tab'))`);

	await knex.schema.createTable('assembly_assignments', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('assembly_id').notNullable().references('tool_assemblies.id');
		t.bigInteger('measurement_id').notNullable().references('assembly_measurements.id');
		t.bigInteger('machine_id').notNullable().references('machines.id');
		t.bigInteger('tool_id').notNullable().references('tools.id');
		t.bigInteger('reading_id').notNullable().references('readings.id');
		t.bigInteger('assigned_by');
		t.timestamp('assigned_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['assembly_id', 'assigned_at'], 'assembly_assignments_assembly_idx');
		t.index(['machine_id', 'tool_id'], 'assembly_assignments_tool_idx');
	});

	// Append-only at the database, for every role: the same refuse_change() as readings (the
	// shop role gets no UPDATE/DELETE on them when migrate seals the schema).
	for (const table of APPEND_ONLY) {
		await knex.raw(
			`create trigger ${table}_append_only before update or delete on ?? for each row execute function refuse_change()`,
			[table]
		);
		await knex.raw(
			`create trigger ${table}_no_truncate before truncate on ?? execute function refuse_change()`,
			[table]
		);
	}
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('assembly_assignments');
	await knex.schema.dropTable('presetter_mappings');
	await knex.schema.dropTable('assembly_measurements');
	await knex.schema.dropTable('presetter_imports');
	await knex.schema.dropTable('tool_assemblies');
}
