import type { Knex } from 'knex';

/**
 * Deleting a shop (issue 18) is two steps: the owner asks (`deletion_requested_at`; the shop is
 * read-only and the owner may restore it until `purge_after`), then a background job drops the
 * schema and uploads and sets `purged_at`. The row stays (slug, name, dates) so the public
 * lifecycle log keeps its subject.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('shops', (t) => {
		t.timestamp('deletion_requested_at', { useTz: true });
		t.bigInteger('deletion_requested_by');
		t.timestamp('purge_after', { useTz: true });
		t.timestamp('purged_at', { useTz: true });
	});
	await knex.raw(
		`create index shops_purge_after_idx on shops (purge_after) where purge_after is not null and purged_at is null`
	);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('drop index if exists shops_purge_after_idx');
	await knex.schema.alterTable('shops', (t) => {
		t.dropColumns('deletion_requested_at', 'deletion_requested_by', 'purge_after', 'purged_at');
	});
}
