import type { Knex } from 'knex';

/**
 * Part measurements (issue 20): the nominal and measured size of a feature a tool cut, and the
 * wear change Datumkeep proposed from them (engine `proposeWear`), kept when a lead accepts it.
 * Append-only. The wear itself is the offset component version that points here.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('part_measurements', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** The H/D number of the tool that cut the feature, as text ("3"). */
		t.text('register').notNullable();
		/** 'depth', 'outside' or 'inside'. */
		t.text('feature').notNullable();
		t.decimal('nominal', 12, 4).notNullable();
		t.decimal('measured', 12, 4).notNullable();
		t.text('units').notNullable();
		/** The wear register changed: 'length-wear' or 'radius-wear'. */
		t.text('component').notNullable();
		t.decimal('change', 12, 4).notNullable();
		t.decimal('new_wear', 12, 4).notNullable();
		/** The reasoning shown when it was accepted, sign in words. */
		t.text('explanation').notNullable();
		t.text('note').notNullable().defaultTo('');
		t.bigInteger('taken_by');
		t.timestamp('taken_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['machine_id', 'register', 'taken_at'], 'part_measurements_register_idx');
	});
	await knex.raw(`alter table part_measurements
		add constraint part_measurements_feature_check check (feature in ('depth', 'outside', 'inside')),
		add constraint part_measurements_component_check check (component in ('length-wear', 'radius-wear')),
		add constraint part_measurements_units_check check (units in ('inch', 'mm')),
		add constraint part_measurements_sizes_check check (nominal > 0 and measured > 0)`);
	await knex.raw(
		'create trigger part_measurements_append_only before update or delete on part_measurements for each row execute function refuse_change()'
	);
	await knex.raw(
		'create trigger part_measurements_no_truncate before truncate on part_measurements execute function refuse_change()'
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('part_measurements');
}
