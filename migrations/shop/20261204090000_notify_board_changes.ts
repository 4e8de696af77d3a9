import type { Knex } from 'knex';

/**
 * The tables the fleet board reads (src/lib/server/fleet/board.ts) announce every committed
 * change with `board:<schema>` (public.notify_board_change), so the board cache
 * (src/lib/server/fleet/board-cache.ts) drops the shop's board the moment it is out of date.
 * One statement-level trigger per table: a bulk insert is one message, not one per row.
 * `current_offsets` covers offset versions (its trigger writes it) and `machines` covers
 * readings (their trigger raises machines.last_reading_at).
 */
export const BOARD_TABLES = [
	'machines',
	'reference_surfaces',
	'setups',
	'current_offsets',
	'findings',
	'check_runs'
] as const;

export async function up(knex: Knex): Promise<void> {
	for (const table of BOARD_TABLES) {
		await knex.raw(
			`create trigger ?? after insert or update or delete or truncate on ??
			for each statement execute function public.notify_board_change()`,
			[`${table}_notify_board`, table]
		);
	}
}

export async function down(knex: Knex): Promise<void> {
	for (const table of BOARD_TABLES) {
		await knex.raw('drop trigger if exists ?? on ??', [`${table}_notify_board`, table]);
	}
}
