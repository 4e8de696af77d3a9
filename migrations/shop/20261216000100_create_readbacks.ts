import type { Knex } from 'knex';

/**
 * Read-backs (issue 16): what a machine's control held when someone read it back, compared with
 * what Datumkeep had computed. Append-only like readings: a read-back is never edited or
 * deleted; reading back again is a new record. `readback_values` keeps every register of the
 * read-back with the offset version it was compared against, so a register's verification
 * ("verified at the control", "mismatched", "not verified since it changed") is the newest
 * compared row of that register set against its current offset version.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('readbacks', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** The setup whose registers were read back, when started from a setup. */
		t.bigInteger('setup_id').references('setups.id');
		/** 'file' (the control's saved offset file) or 'typed' (what the control showed). */
		t.text('source').notNullable();
		t.text('file_name').notNullable().defaultTo('');
		/** The uploaded file as received, so the comparison can always be traced to it. */
		t.text('file_text');
		t.text('units').notNullable();
		t.text('control_style').notNullable();
		t.integer('equal_count').notNullable();
		t.integer('different_count').notNullable();
		t.text('note').notNullable().defaultTo('');
		t.bigInteger('taken_by');
		t.timestamp('taken_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
		t.index(['machine_id', 'taken_at'], 'readbacks_machine_taken_idx');
	});
	await knex.raw(`alter table readbacks
		add constraint readbacks_source_check check (source in ('file','typed')),
		add constraint readbacks_units_check check (units in ('inch','mm')),
		add constraint readbacks_file_check check (source = 'typed' or file_text is not null)`);

	await knex.schema.createTable('readback_values', (t) => {
		t.bigIncrements('id').primary();
		t.bigInteger('readback_id').notNullable().references('readbacks.id');
		t.bigInteger('machine_id').notNullable().references('machines.id');
		/** 'work', 'tool' (length), 'wear' (length wear) or 'other' (a register Datumkeep does not keep). */
		t.text('register_kind').notNullable();
		/** "G54", "G54.1 P3", the H number ("3"), or the file's label for 'other'. */
		t.text('register').notNullable();
		/** What the control holds (machine units); null when only Datumkeep has the register. */
		t.decimal('value', 16, 4);
		/** What Datumkeep had computed; null when only the control has the register. */
		t.decimal('expected', 16, 4);
		/** The offset version compared against (current at the time). */
		t.bigInteger('offset_version_id').references('offset_versions.id');
		t.text('status').notNullable();
		/** Likely causes of a difference: [{ kind, text }], most likely first. */
		t.jsonb('causes').notNullable().defaultTo('[]');
		/** The value as written when it had no decimal point (flagged). */
		t.text('no_point_text');
		t.index(
			['machine_id', 'register_kind', 'register', 'readback_id'],
			'readback_values_register_idx'
		);
	});
	await knex.raw(`alter table readback_values
		add constraint readback_values_kind_check check (register_kind in ('work','tool','wear','other')),
		add constraint readback_values_status_check check (status in ('equal','different','only-control','only-datumkeep','noted'))`);

	// Append-only at the database, for every role: the same refuse_change() as readings.
	for (const table of ['readbacks', 'readback_values']) {
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
	await knex.schema.dropTable('readback_values');
	await knex.schema.dropTable('readbacks');
}
