import type { Knex } from 'knex';

/**
 * One photo per machine (the machine itself, or its table with the reference block), stored on
 * disk under UPLOADS_DIR like setup photos and served through a guarded route.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('machines', (t) => {
		/** Path relative to UPLOADS_DIR, e.g. "shop_3/machines/2/9f…c2.jpg". */
		t.text('photo_key');
		t.text('photo_type');
		t.text('photo_name');
	});
	await knex.raw(`alter table machines add constraint machines_photo_type_check
		check (photo_type is null or photo_type in ('image/jpeg','image/png','image/webp'))`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('alter table machines drop constraint machines_photo_type_check');
	await knex.schema.alterTable('machines', (t) => {
		t.dropColumn('photo_key');
		t.dropColumn('photo_type');
		t.dropColumn('photo_name');
	});
}
