import type { Knex } from 'knex';

/**
 * Readings of kind 'presetter' (issue 20): an assembly measured off the machine and put in a
 * pocket sets its H like a touch-off does, through the same reading path (gate, findings,
 * overrides, history). Such a reading has no machine Z — it names the measurement instead.
 *
 * The kind list is extended from whatever the constraint holds now (not rewritten), so other
 * migrations that add kinds of their own can run before or after this one.
 */
async function kindsNow(knex: Knex): Promise<string[]> {
	const { rows } = await knex.raw(
		`select pg_get_constraintdef(c.oid) as def from pg_constraint c
		join pg_class t on t.oid = c.conrelid
		where t.relname = 'readings' and c.conname = 'readings_kind_check'
			and t.relnamespace = current_schema()::regnamespace`
	);
	const def: string = rows[0]?.def ?? '';
	return [...def.matchAll(/'([^']+)'/g)].map((m) => m[1]);
}

async function setKinds(knex: Knex, kinds: string[]) {
	const list = kinds.map((k) => `'${k.replace(/'/g, "''")}'`).join(',');
	await knex.raw('alter table readings drop constraint if exists readings_kind_check');
	await knex.raw(
		`alter table readings add constraint readings_kind_check check (kind in (${list}))`
	);
}

export async function up(knex: Knex): Promise<void> {
	const kinds = await kindsNow(knex);
	await setKinds(knex, [...new Set([...kinds, 'presetter'])]);
	await knex.schema.alterTable('readings', (t) => {
		t.bigInteger('presetter_measurement_id').references('assembly_measurements.id');
	});
	await knex.raw('alter table readings alter column machine_z drop not null');
	await knex.raw(`alter table readings
		add constraint readings_presetter_check check (
			(kind = 'presetter') = (presetter_measurement_id is not null)
			and (kind = 'presetter' or machine_z is not null))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table readings drop constraint readings_presetter_check');
	await knex.raw('alter table readings alter column machine_z set not null');
	await knex.schema.alterTable('readings', (t) => {
		t.dropColumn('presetter_measurement_id');
	});
	await setKinds(
		knex,
		(await kindsNow(knex)).filter((k) => k !== 'presetter')
	);
}
