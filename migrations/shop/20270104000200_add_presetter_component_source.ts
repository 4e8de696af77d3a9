import type { Knex } from 'knex';

/**
 * A tool's radius (or diameter) register can come from the presetter (issue 20): an assembly
 * measured with a radius sets the pocket's radius register when it is assigned, as a version of
 * source 'presetter' naming the measurement (like the 'presetter' reading does for H).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('offset_component_versions', (t) => {
		t.bigInteger('presetter_measurement_id').references('assembly_measurements.id');
	});
	await knex.raw(`alter table offset_component_versions
		drop constraint offset_component_versions_source_check,
		add constraint offset_component_versions_source_check check (
			(source = 'edge' and edge_reading_id is not null)
			or (source = 'part' and part_measurement_id is not null)
			or (source = 'presetter' and presetter_measurement_id is not null and component = 'radius')
			or source = 'entered')`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`alter table offset_component_versions
		drop constraint offset_component_versions_source_check,
		add constraint offset_component_versions_source_check check (
			(source = 'edge' and edge_reading_id is not null)
			or (source = 'part' and part_measurement_id is not null)
			or source = 'entered')`);
	await knex.schema.alterTable('offset_component_versions', (t) =>
		t.dropColumn('presetter_measurement_id')
	);
}
