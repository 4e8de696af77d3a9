import type { Knex } from 'knex';

/**
 * The fleet board counts, per machine, the registers in use by active setups that are not
 * verified at the control (issue 16). That reads read-back values and which fixtures and tools
 * the setups use, so those tables announce their changes to the board cache too
 * (see 20261204090000_notify_board_changes).
 */
export const READBACK_BOARD_TABLES = [
	'readback_values',
	'setup_fixtures',
	'setup_tools',
	'fixtures',
	'tools'
] as const;

export async function up(knex: Knex): Promise<void> {
	for (const table of READBACK_BOARD_TABLES) {
		await knex.raw(
			`create trigger ?? after insert or update or delete or truncate on ??
			for each statement execute function public.notify_board_change()`,
			[`${table}_notify_board`, table]
		);
	}
}

export async function down(knex: Knex): Promise<void> {
	for (const table of READBACK_BOARD_TABLES) {
		await knex.raw('drop trigger if exists ?? on ??', [`${table}_notify_board`, table]);
	}
}
