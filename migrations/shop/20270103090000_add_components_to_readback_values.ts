import type { Knex } from 'knex';

/**
 * Read-back beside Z (issue 20): a read-back row may be a component of a register — a work
 * offset's X or Y, a tool's radius (or diameter) geometry, length wear or radius wear — stored
 * with `register_kind` naming the component and `component_version_id` the
 * offset_component_versions row it was compared against (`offset_version_id` stays Z's).
 * The table stays append-only (its trigger is unchanged).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('readback_values', (t) => {
		t.bigInteger('component_version_id').references('offset_component_versions.id');
	});
	await knex.raw(`alter table readback_values drop constraint readback_values_kind_check,
		add constraint readback_values_kind_check check (register_kind in
			('work','tool','wear','other','x','y','radius','length-wear','radius-wear'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`alter table readback_values drop constraint readback_values_kind_check,
		add constraint readback_values_kind_check check (register_kind in ('work','tool','wear','other'))`);
	await knex.schema.alterTable('readback_values', (t) => t.dropColumn('component_version_id'));
}
