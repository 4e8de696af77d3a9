import type { Knex } from 'knex';

/**
 * Where each shop's schema lives when shops are spread over several PostgreSQL servers
 * (docs/DEPLOYMENT.md, "More than one PostgreSQL server"). `public` — users, memberships, this
 * map — stays on the home server; a shop's schema may sit on another server, named here by a
 * plain name whose connection URL comes from configuration (DATABASE_SERVERS), never from the
 * database, so no password is stored in a table.
 *
 * - `server`: the server that holds the shop's schema; `home` is the server of DATABASE_URL.
 * - `moving_to` / `moving_since`: set while `npm run shop:move` copies the schema to another
 *   server; the shop is read-only meanwhile (the guard answers 503 to writes, and the shop's
 *   role has lost its INSERT/UPDATE/DELETE grants on the source).
 * - `moved_from`: the server of the last move's source, whose old copy the move renamed
 *   (`shop_<id>_moved_<when>`, kept for a while and dropped by hand).
 *
 * Every existing shop starts on `home`. A change here empties the membership caches of every
 * node at once (the same `memberships` notification as public.shops).
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('shop_servers', (t) => {
		t.bigInteger('shop_id')
			.primary({ constraintName: 'shop_servers_pkey' })
			.references('id')
			.inTable('public.shops')
			.onDelete('CASCADE')
			.withKeyName('shop_servers_shop_id_fkey');
		t.text('server').notNullable().defaultTo('home');
		t.text('moving_to').nullable();
		t.timestamp('moving_since', { useTz: true }).nullable();
		t.text('moved_from').nullable();
		t.timestamp('updated_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
	});
	await knex.raw(
		"alter table public.shop_servers add constraint shop_servers_server_check check (server ~ '^[a-z][a-z0-9_-]{0,39}$')"
	);
	await knex.raw(
		"alter table public.shop_servers add constraint shop_servers_moving_to_check check (moving_to is null or (moving_to ~ '^[a-z][a-z0-9_-]{0,39}$' and moving_since is not null))"
	);
	await knex.raw(
		"insert into public.shop_servers (shop_id, server) select id, 'home' from public.shops on conflict do nothing"
	);
	await knex.raw(`create trigger shop_servers_notify_change after insert or update or delete or truncate
		on public.shop_servers for each statement execute function public.notify_memberships_change()`);
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('shop_servers');
}
