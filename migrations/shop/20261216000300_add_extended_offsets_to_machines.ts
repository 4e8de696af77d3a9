import type { Knex } from 'knex';

/**
 * Extended work offsets are a machine setting, not one control family's numbers (issue 16): how
 * many the control has (0–48, the registers Datumkeep keeps) and how its programs address them
 * (`G54.1 P3` or `G54 P3`). Machines whose load programs use the G10 L10 length form keep the
 * 48 they were assumed to have; the tool-table (G10 L1) form has none in load programs.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('machines', (t) => {
		t.smallint('extended_work_offsets').notNullable().defaultTo(0);
		t.text('extended_address').notNullable().defaultTo('G54.1 P');
	});
	await knex.raw(`alter table machines
		add constraint machines_extended_work_offsets_range check (extended_work_offsets between 0 and 48),
		add constraint machines_extended_address_check check (extended_address in ('G54.1 P', 'G54 P'))`);
	await knex('machines').where({ control_style: 'iso' }).update({ extended_work_offsets: 48 });
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw(`alter table machines
		drop constraint if exists machines_extended_work_offsets_range,
		drop constraint if exists machines_extended_address_check`);
	await knex.schema.alterTable('machines', (t) => {
		t.dropColumn('extended_work_offsets');
		t.dropColumn('extended_address');
	});
}
